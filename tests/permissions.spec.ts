import { expect, test, type APIRequestContext, type PlaywrightWorkerArgs } from '@playwright/test';

type Playwright = PlaywrightWorkerArgs['playwright'];
import { apiAs } from './helpers';
import { discoverRoutes } from './routes-on-disk';
import { ROUTE_RULES, type Outcome, type Persona } from './route-rules';

test('every route and method on disk has a permission rule', () => {
	const missing: string[] = [];
	for (const { route, methods } of discoverRoutes()) {
		for (const method of methods) {
			if (!ROUTE_RULES.some((r) => r.route === route && r.method === method)) missing.push(`${method} ${route}`);
		}
	}
	expect(missing, 'add these to tests/route-rules.ts').toEqual([]);
});

test.describe('route × role', () => {
	const personas: Persona[] = ['anon', 'admin', 'editor', 'reviewer', 'processor', 'outsider'];
	const contexts = new Map<Persona, APIRequestContext>();
	let sessionId = '';

	async function contextFor(playwright: Playwright, baseURL: string | undefined, persona: Persona) {
		if (persona !== 'anon') return apiAs(baseURL, persona);
		return playwright.request.newContext({ baseURL, extraHTTPHeaders: { origin: baseURL ?? '' } });
	}

	test.beforeAll(async ({ playwright, baseURL }) => {
		for (const persona of personas) contexts.set(persona, await contextFor(playwright, baseURL, persona));
		const created = await contexts.get('editor')!.post('/api/sessions', {
			data: { name: 'Permission probe', site: 'Test bench' }
		});
		expect(created.status()).toBe(201);
		sessionId = (await created.json()).session.id;
	});

	test.afterAll(async () => {
		for (const context of contexts.values()) await context.dispose();
	});

	for (const rule of ROUTE_RULES) {
		test(`${rule.method} ${rule.route}`, async ({ playwright, baseURL }) => {
			const failures: string[] = [];
			for (const persona of personas) {
				const context = rule.endsSession ? await contextFor(playwright, baseURL, persona) : contexts.get(persona)!;
				const path = rule.path.replace('{session}', sessionId);
				const method = rule.method.split(' ')[0];
				const response = await context.fetch(path, {
					method,
					maxRedirects: 0,
					// Form actions answer JSON to scripts and HTML (with real statuses) to browsers.
					headers: { accept: rule.method.includes('?/') ? 'application/json' : 'text/html' },
					...(rule.body === 'json' ? { data: {} } : rule.body === 'form' ? { form: {} } : {})
				});
				const actual = await classify(response.status(), response.headers(), await response.text(), path);
				if (!matches(rule.expect[persona], actual)) {
					failures.push(`${persona}: expected ${rule.expect[persona]}, got ${actual} (${response.status()})`);
				}
				if (rule.endsSession) await context.dispose();
			}
			expect(failures).toEqual([]);
		});
	}
});

type Observed = 'ok' | 'bad_input' | 'login' | 'deny' | 'hidden' | 'other';

async function classify(status: number, headers: Record<string, string>, body: string, path: string): Promise<Observed> {
	const isApi = path.startsWith('/api/');
	// Form actions answer JSON describing the result, redirect or failure.
	if (headers['content-type']?.includes('application/json') && !isApi) {
		const parsed = JSON.parse(body) as { type?: string; location?: string };
		if (parsed.type === 'redirect') return parsed.location?.startsWith('/login') ? 'login' : 'ok';
		if (parsed.type === 'failure') return 'bad_input';
		if (parsed.type === 'error') return status === 403 ? 'deny' : status === 404 ? 'hidden' : 'other';
		if (parsed.type === 'success') return 'ok';
	}
	if (status === 401) return 'login';
	if (status === 303 && headers.location?.startsWith('/login')) return 'login';
	if (status === 403) return 'deny';
	if (status === 404) return 'hidden';
	if ([400, 409, 422].includes(status)) return 'bad_input';
	if (status < 400) return 'ok';
	return 'other';
}

function matches(expected: Outcome, actual: Observed): boolean {
	switch (expected) {
		case 'public':
			return actual === 'ok' || actual === 'bad_input' || actual === 'login';
		case 'allow':
			return actual === 'ok' || actual === 'bad_input';
		default:
			return actual === expected;
	}
}
