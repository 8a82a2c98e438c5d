import { expect, test } from '@playwright/test';
import { apiAs } from './helpers';
import { discoverRoutes } from './routes-on-disk';

interface OpenApi {
	openapi: string;
	paths: Record<string, Record<string, { requestBody?: { content: { 'application/json': { schema: { required?: string[] } } } } }>>;
}

/** /api/sessions/[id=id] on disk is /api/sessions/{id} in OpenAPI. */
function openApiPath(routeId: string): string {
	return routeId.replace(/\[(?:\.\.\.)?(\w+)(?:=\w+)?\]/g, '{$1}');
}

test('the OpenAPI document describes every API route on disk, and nothing else', async ({ request }) => {
	const response = await request.get('/api/openapi.json');
	expect(response.status()).toBe(200);
	const doc = (await response.json()) as OpenApi;
	expect(doc.openapi).toBe('3.1.0');
	const onDisk = discoverRoutes()
		.filter((r) => r.route.startsWith('/api/') && r.route !== '/api/openapi.json')
		.flatMap((r) => r.methods.map((m) => `${m.toLowerCase()} ${openApiPath(r.route)}`))
		.sort();
	const documented = Object.entries(doc.paths)
		.flatMap(([path, methods]) => Object.keys(methods).map((m) => `${m} ${path}`))
		.sort();
	expect(documented).toEqual(onDisk);
});

test('a body the document marks invalid is refused, and a valid one accepted', async ({ baseURL }) => {
	const doc = (await (await fetch(`${baseURL}/api/openapi.json`)).json()) as OpenApi;
	const schema = doc.paths['/api/sessions'].post.requestBody!.content['application/json'].schema;
	expect(schema.required).toContain('name');

	const editor = await apiAs(baseURL, 'editor');
	const missing = await editor.post('/api/sessions', { data: { site: 'No name given' } });
	expect(missing.status()).toBe(400);
	expect((await missing.json()).error.code).toBe('invalid_input');
	const valid = await editor.post('/api/sessions', { data: { name: 'Described by the document', captureDate: '2026-11-30' } });
	expect(valid.status()).toBe(201);
	await editor.dispose();
});
