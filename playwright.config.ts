import { defineConfig } from '@playwright/test';

const PORT = Number(process.env.E2E_PORT ?? 4173);

export default defineConfig({
	testDir: 'tests',
	outputDir: 'test-results',
	fullyParallel: false,
	workers: 1,
	retries: 0,
	timeout: 60_000,
	expect: { timeout: 10_000 },
	reporter: [['list']],
	use: {
		baseURL: `http://127.0.0.1:${PORT}`,
		trace: 'retain-on-failure',
		screenshot: 'only-on-failure',
		launchOptions: {
			executablePath: process.env.CHROMIUM_PATH ?? '/usr/bin/chromium',
			args: [
				'--no-sandbox',
				'--disable-gpu',
				'--disable-quic',
				'--disable-background-networking',
				'--disable-component-update',
				'--disable-sync',
				'--no-first-run'
			]
		}
	},
	webServer: {
		// The built app, as users get it, against a database of its own.
		command: 'node scripts/e2e-server.js',
		url: `http://127.0.0.1:${PORT}/login`,
		reuseExistingServer: false,
		timeout: 180_000,
		stdout: 'pipe',
		env: {
			PORT: String(PORT),
			HOST: '127.0.0.1',
			ORIGIN: `http://127.0.0.1:${PORT}`,
			DATABASE_URL: 'data/e2e/lockstep.db',
			MEDIA_ROOT: 'data/e2e/media',
			LOCAL_SMTP_PORT: process.env.LOCAL_SMTP_PORT ?? '2626',
			INSECURE_COOKIES: '1',
			// Upload chunks stream through adapter-node, whose body limit is 512 KB unless raised;
			// small chunks here make every fixture upload take several resumable PATCHes.
			BODY_SIZE_LIMIT: 'Infinity',
			UPLOAD_CHUNK_BYTES: '65536'
		}
	}
});
