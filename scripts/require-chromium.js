// Playwright drives Debian's Chromium; say how to get it instead of failing obscurely.
import { existsSync } from 'node:fs';

const path = process.env.CHROMIUM_PATH ?? '/usr/bin/chromium';
if (!existsSync(path)) {
	console.error(`Chromium not found at ${path}: install it with "apt-get install -y chromium" (or set CHROMIUM_PATH).`);
	process.exit(1);
}
