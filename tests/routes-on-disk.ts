import { readdirSync, readFileSync, statSync } from 'node:fs';
import { join } from 'node:path';

/** Every route on disk with the methods and form actions it answers. */
export function discoverRoutes(dir = 'src/routes', id = ''): { route: string; methods: string[] }[] {
	const found: { route: string; methods: string[] }[] = [];
	const entries = readdirSync(dir);
	const methods: string[] = [];
	const route = id || '/';
	if (entries.includes('+page.svelte')) methods.push('GET');
	if (entries.includes('+page.server.ts')) {
		const source = readFileSync(join(dir, '+page.server.ts'), 'utf8');
		const actions = source.match(/export const actions = \{([\s\S]*?)\n\} satisfies Actions/)?.[1] ?? '';
		for (const m of actions.matchAll(/^\t(\w+): /gm)) methods.push(m[1] === 'default' ? 'POST' : `POST ?/${m[1]}`);
	}
	if (entries.includes('+server.ts')) {
		const source = readFileSync(join(dir, '+server.ts'), 'utf8');
		for (const m of source.matchAll(/export const (GET|POST|PUT|PATCH|DELETE|HEAD|OPTIONS)\b/g)) methods.push(m[1]);
	}
	if (methods.length) found.push({ route, methods });
	for (const entry of entries) {
		const full = join(dir, entry);
		if (!statSync(full).isDirectory()) continue;
		const segment = /^\(.*\)$/.test(entry) ? '' : `/${entry}`;
		found.push(...discoverRoutes(full, id + segment));
	}
	return found;
}
