import { expect, test, type APIRequestContext, type Browser } from '@playwright/test';
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { apiAs, PEOPLE, signInAs, signInWith } from './helpers';

/*
 * The admin pages: people (roles, deactivation, the last-admin rule), API tokens,
 * import folders and the outbox. The demo admin is the only admin of the demo
 * workspace and stays so; anything destructive happens to people created here.
 */

const WORKSPACE = 'Fieldglass Capture Studio';
const run = Date.now().toString(36);

// Each flow signs people in and out several times (argon2id on purpose); give slow machines room.
test.describe.configure({ timeout: 150_000 });

/** Invites a throwaway person through the API and accepts through the invitation page. */
async function newPerson(browser: Browser, baseURL: string | undefined, api: APIRequestContext, role: string, label: string) {
	const person = { email: `${label}.${run}@example.test`, name: `Test ${label} ${run}`, password: `pw-${label}-${run}-long` };
	expect((await api.post('/api/admin/invitations', { data: { email: person.email, role } })).status()).toBe(201);
	const list = (await (await api.get('/api/admin/outbox')).json()) as { messages: { id: string; toAddress: string }[] };
	const mail = list.messages.find((m) => m.toAddress === person.email);
	expect(mail).toBeDefined();
	const { message } = (await (await api.get(`/api/admin/outbox/${mail!.id}`)).json()) as { message: { textBody: string } };
	const link = message.textBody.match(/https?:\/\/\S+\/invite\/\S+/)![0];
	const context = await browser.newContext({ baseURL });
	const page = await context.newPage();
	await page.goto(link, { waitUntil: 'networkidle' });
	await page.getByLabel('Your name').fill(person.name);
	await page.getByLabel('Choose a password').fill(person.password);
	await page.getByLabel('Type it again').fill(person.password);
	await page.getByRole('button', { name: `Join ${WORKSPACE}` }).click();
	await expect(page).toHaveURL(/\/sessions$/);
	await context.close();
	return person;
}

test('the last active admin can be neither demoted nor deactivated; another admin can', async ({ page, browser, baseURL }) => {
	await signInAs(page, 'admin');
	await page.goto('/admin/people', { waitUntil: 'networkidle' });
	const ada = page.getByRole('row').filter({ hasText: PEOPLE.admin.email });
	await ada.getByRole('combobox', { name: `Role of ${PEOPLE.admin.name}` }).selectOption('editor');
	await ada.getByRole('button', { name: `Save role of ${PEOPLE.admin.name}` }).click();
	await expect(page.getByRole('alert')).toHaveText(
		`${PEOPLE.admin.name} is the last active admin of ${WORKSPACE}, so they cannot be made editor. Make someone else an admin first.`
	);
	await page.reload();
	await expect(ada.getByRole('combobox', { name: `Role of ${PEOPLE.admin.name}` })).toHaveValue('admin');
	await expect(page.getByTestId('current-role')).toHaveText('Admin');
	// Nobody deactivates themselves from the page.
	await expect(ada.getByRole('button', { name: /Deactivate/ })).toHaveCount(0);

	// The JSON API says the same, in the { error: { code, message } } shape.
	const api = await apiAs(baseURL, 'admin');
	const people = (await (await api.get('/api/admin/people')).json()) as { members: { userId: string; email: string }[] };
	const adaId = people.members.find((m) => m.email === PEOPLE.admin.email)!.userId;
	const demote = await api.patch(`/api/admin/people/${adaId}`, { data: { role: 'reviewer' } });
	expect(demote.status()).toBe(409);
	expect(await demote.json()).toEqual({ error: { code: 'last_admin', message: expect.stringContaining('last active admin') } });
	const deactivate = await api.patch(`/api/admin/people/${adaId}`, { data: { active: false } });
	expect(deactivate.status()).toBe(409);

	// With a second admin, that admin can be made an editor again.
	const second = await newPerson(browser, baseURL, api, 'admin', 'coadmin');
	await page.reload();
	const row = page.getByRole('row').filter({ hasText: second.email });
	await expect(row.getByRole('combobox', { name: `Role of ${second.name}` })).toHaveValue('admin');
	await row.getByRole('combobox', { name: `Role of ${second.name}` }).selectOption('editor');
	await row.getByRole('button', { name: `Save role of ${second.name}` }).click();
	await expect(page.getByRole('status')).toHaveText(`${second.name} is now editor here.`);
	await expect(row.getByRole('combobox', { name: `Role of ${second.name}` })).toHaveValue('editor');
});

test('an admin deactivates and reactivates a person; a deactivated person cannot sign in', async ({ page, browser, baseURL }) => {
	const api = await apiAs(baseURL, 'admin');
	const person = await newPerson(browser, baseURL, api, 'reviewer', 'leaver');

	await signInAs(page, 'admin');
	await page.goto('/admin/people', { waitUntil: 'networkidle' });
	const row = page.getByRole('row').filter({ hasText: person.email });
	await expect(row).toContainText('Active');
	await row.getByRole('button', { name: `Deactivate ${person.name}` }).click();
	await expect(page.getByRole('status')).toHaveText(`${person.name} is deactivated and signed out.`);
	await expect(row).toContainText('Deactivated');

	const theirs = await browser.newContext({ baseURL });
	const theirPage = await theirs.newPage();
	await signInWith(theirPage, person.email, person.password);
	await expect(theirPage.getByRole('alert')).toHaveText('That e-mail address and password do not match an active account.');

	await row.getByRole('button', { name: `Reactivate ${person.name}` }).click();
	await expect(page.getByRole('status')).toHaveText(`${person.name} can sign in again.`);
	await expect(row).toContainText('Active');
	await signInWith(theirPage, person.email, person.password);
	await expect(theirPage).toHaveURL(/\/sessions$/);
	await theirs.close();
});

test('inviting someone who is already a member is refused with the reason, keeping what was typed', async ({ page }) => {
	await signInAs(page, 'admin');
	await page.goto('/admin/people', { waitUntil: 'networkidle' });
	await page.getByLabel('E-mail address').fill(PEOPLE.editor.email.toUpperCase());
	await page.getByLabel('Role', { exact: true }).selectOption('processor');
	await page.getByRole('button', { name: 'Send invitation' }).click();
	await expect(page.getByRole('alert')).toHaveText(`${PEOPLE.editor.email} is already a member of this workspace; change their role in the list instead.`);
	await expect(page.getByLabel('E-mail address')).toHaveValue(PEOPLE.editor.email.toUpperCase());
	await expect(page.getByLabel('Role', { exact: true })).toHaveValue('processor');
});

test('an API token is shown once, works as a Bearer token, and is refused with 401 once revoked', async ({ page, playwright, baseURL }) => {
	await signInAs(page, 'admin');
	await page.getByRole('link', { name: 'API tokens' }).click();
	await expect(page).toHaveURL(/\/admin\/tokens$/);
	// As the other admin tests do: a name typed into the server-rendered form before the page's
	// script has loaded was once lost on the way to the button (CI, 2026-12-02).
	await page.waitForLoadState('networkidle');
	const name = `Render farm ${run}`;
	await page.getByLabel('Name').fill(name);
	await page.getByLabel('Role').selectOption('processor');
	await page.getByRole('button', { name: 'Create token' }).click();
	await expect(page.getByText('this is the only time Lockstep shows it')).toBeVisible();
	const secret = await page.getByLabel('New token').inputValue();
	expect(secret).toMatch(/^lst_[\w-]{20,}$/);

	const row = page.getByRole('row').filter({ hasText: name });
	await expect(row).toContainText(secret.slice(0, 10));
	await expect(row).toContainText('Processor');
	await expect(row).toContainText('Never');

	const bearer = await playwright.request.newContext({ baseURL, extraHTTPHeaders: { authorization: `Bearer ${secret}` } });
	const me = await bearer.get('/api/me');
	expect(me.status()).toBe(200);
	expect(await me.json()).toMatchObject({ role: 'processor', workspace: { name: WORKSPACE } });
	// A processor token may not manage people.
	const forbidden = await bearer.get('/api/admin/people');
	expect(forbidden.status()).toBe(403);
	expect((await forbidden.json()).error.code).toBe('forbidden');

	// Leaving and coming back: the secret is gone for good, the use is recorded.
	await page.reload();
	await expect(page.getByLabel('New token')).toHaveCount(0);
	await expect(page.getByText(secret)).toHaveCount(0);
	await expect(row).not.toContainText('Never');

	page.once('dialog', (dialog) => dialog.accept());
	await row.getByRole('button', { name: `Revoke ${name}` }).click();
	await expect(page.getByRole('status')).toHaveText('Token revoked. Requests that send it are now refused.');
	await expect(page.getByRole('region', { name: /Revoked/ })).toContainText(name);

	const refused = await bearer.get('/api/me');
	expect(refused.status()).toBe(401);
	const body = await refused.json();
	expect(body).toEqual({ error: { code: 'unauthenticated', message: expect.any(String) } });
	await bearer.dispose();
});

test('the tokens API creates, lists and revokes tokens, and a token cannot mint another', async ({ browser, baseURL, playwright }) => {
	const api = await apiAs(baseURL, 'admin');
	const created = await api.post('/api/admin/tokens', { data: { name: `API-made ${run}`, role: 'admin' } });
	expect(created.status()).toBe(201);
	const { token, secret } = (await created.json()) as { token: { id: string; prefix: string }; secret: string };
	expect(secret.startsWith(token.prefix)).toBe(true);

	const asToken = await playwright.request.newContext({ baseURL, extraHTTPHeaders: { authorization: `Bearer ${secret}` } });
	const listed = await asToken.get('/api/admin/tokens');
	expect(listed.status()).toBe(200);
	expect(JSON.stringify(await listed.json())).not.toContain(secret);
	const minted = await asToken.post('/api/admin/tokens', { data: { name: 'successor', role: 'admin' } });
	expect(minted.status()).toBe(403);
	expect((await minted.json()).error.code).toBe('person_required');
	const invalid = await api.post('/api/admin/tokens', { data: { name: '', role: 'owner' } });
	expect(invalid.status()).toBe(400);
	expect((await invalid.json()).error.code).toBe('invalid_input');

	expect((await api.delete(`/api/admin/tokens/${token.id}`)).status()).toBe(204);
	expect((await asToken.get('/api/admin/tokens')).status()).toBe(401);
	expect((await api.delete(`/api/admin/tokens/${token.id}`)).status()).toBe(404);
	await asToken.dispose();
});

test('an admin names an import folder that must exist, and removes it', async ({ page }) => {
	const folder = mkdtempSync(join(tmpdir(), 'lockstep-footage-'));
	writeFileSync(join(folder, 'not-a-folder.txt'), 'x');
	const name = `Ingest NAS ${run}`;
	await signInAs(page, 'admin');
	await page.getByRole('link', { name: 'Import folders' }).click();

	await page.getByLabel('Name').fill(name);
	await page.getByLabel('Folder path on the server').fill('relative/path');
	await page.getByRole('button', { name: 'Add folder' }).click();
	await expect(page.getByRole('alert')).toHaveText('Give an absolute path, starting with /.');

	await page.getByLabel('Folder path on the server').fill(join(folder, 'missing'));
	await page.getByRole('button', { name: 'Add folder' }).click();
	await expect(page.getByRole('alert')).toHaveText(`There is no folder at ${join(folder, 'missing')} on the server.`);

	await page.getByLabel('Folder path on the server').fill(join(folder, 'not-a-folder.txt'));
	await page.getByRole('button', { name: 'Add folder' }).click();
	await expect(page.getByRole('alert')).toHaveText(`${join(folder, 'not-a-folder.txt')} is a file, not a folder.`);
	await expect(page.getByLabel('Name')).toHaveValue(name);

	await page.getByLabel('Folder path on the server').fill(folder);
	await page.getByLabel(/Copy into Lockstep/).check();
	await page.getByRole('button', { name: 'Add folder' }).click();
	await expect(page.getByRole('status')).toHaveText(`“${name}” added. Editors can bring clips in from it.`);
	const row = page.getByRole('row').filter({ hasText: name });
	await expect(row).toContainText(folder);
	await expect(row).toContainText('Copied');

	page.once('dialog', (dialog) => dialog.accept());
	await row.getByRole('button', { name: `Remove ${name}` }).click();
	await expect(page.getByRole('status')).toHaveText('Import folder removed. Clips already brought in stay in their sessions.');
	await expect(page.getByRole('row').filter({ hasText: name })).toHaveCount(0);
});

test('the admin pages are for admins only', async ({ page }) => {
	await signInAs(page, 'editor');
	for (const path of ['/admin/people', '/admin/tokens', '/admin/imports', '/admin/outbox']) {
		const response = await page.goto(path);
		expect(response?.status(), path).toBe(403);
		await expect(page.getByRole('heading', { level: 1 })).toHaveText('Your role (editor) cannot do this here.');
	}
});
