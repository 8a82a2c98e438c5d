import { expect, test, type APIRequestContext, type Browser, type Page } from '@playwright/test';
import { apiAs, PEOPLE, e2eDatabase, signInAs, signInWith } from './helpers';

/*
 * Invitations, password resets, sign-in throttling and refused links, end to end: the
 * mail goes through the app's local SMTP server and is read back from /admin/outbox,
 * as a person testing the demo would. Every destructive step uses people created
 * here, never the demo people other test files sign in as.
 */

const WORKSPACE = 'Fieldglass Capture Studio';
const run = Date.now().toString(36);

// Each flow signs people in and out several times (argon2id on purpose); give slow machines room.
test.describe.configure({ timeout: 150_000 });

/** The first link to `path` in the newest mail to `email`, read through the admin outbox API. */
async function linkInMail(api: APIRequestContext, email: string, path: '/invite/' | '/reset/'): Promise<string> {
	let link = '';
	await expect
		.poll(async () => {
			const list = (await (await api.get('/api/admin/outbox')).json()) as { messages: { id: string; toAddress: string }[] };
			const newest = list.messages.find((m) => m.toAddress === email);
			if (!newest) return '';
			const { message } = (await (await api.get(`/api/admin/outbox/${newest.id}`)).json()) as { message: { textBody: string } };
			link = message.textBody.match(new RegExp(`https?://\\S+${path}\\S+`))?.[0] ?? '';
			return link;
		})
		.toContain(path);
	return link;
}

/** Invites and accepts a throwaway person through the API and the invitation page. */
async function newPerson(browser: Browser, baseURL: string | undefined, api: APIRequestContext, role: string, label: string) {
	const person = { email: `${label}.${run}@example.test`, name: `Test ${label}`, password: `pw-${label}-${run}-long` };
	const invited = await api.post('/api/admin/invitations', { data: { email: person.email, role } });
	expect(invited.status()).toBe(201);
	const link = await linkInMail(api, person.email, '/invite/');
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

async function openMailTo(page: Page, email: string, subject: RegExp): Promise<void> {
	await page.goto('/admin/outbox');
	const row = page.getByRole('row').filter({ hasText: email }).filter({ hasText: subject }).first();
	await row.getByRole('link').click();
	await expect(page.getByRole('heading', { level: 1 })).toHaveText(subject);
}

test('an admin invites a new person, who accepts through the mailed link and is signed in with their role', async ({ page, browser, baseURL }) => {
	const email = `rhea.invited.${run}@example.test`;
	await signInAs(page, 'admin');
	await page.getByRole('link', { name: 'People' }).click();
	await page.getByLabel('E-mail address').fill(email);
	await page.getByLabel('Role', { exact: true }).selectOption('reviewer');
	await page.getByRole('button', { name: 'Send invitation' }).click();
	await expect(page.getByRole('status')).toHaveText(`Invitation sent to ${email}.`);
	await expect(page.getByRole('row').filter({ hasText: email })).toContainText('Reviewer');

	await page.getByRole('link', { name: 'Outbox' }).click();
	await openMailTo(page, email, /invited you to Fieldglass Capture Studio/);
	const link = page.getByRole('link', { name: /\/invite\// });
	const href = await link.getAttribute('href');
	expect(href).toMatch(/^http:\/\/127\.0\.0\.1:\d+\/invite\/[\w-]{20,}$/);
	// The token is stored only as a hash: the link's secret is nowhere in the database.
	const token = href!.split('/invite/')[1];
	const db = e2eDatabase();
	const stored = db.prepare('select token_hash from invitations where email = ?').get(email) as { token_hash: string };
	db.close();
	expect(stored.token_hash).not.toContain(token);

	// The invitee opens it in their own browser.
	const theirs = await browser.newContext({ baseURL });
	const invitee = await theirs.newPage();
	await invitee.goto(href!, { waitUntil: 'networkidle' });
	await expect(invitee.getByRole('heading', { name: WORKSPACE })).toBeVisible();
	await expect(invitee.getByText(`${PEOPLE.admin.name} invited you to join`)).toBeVisible();
	await expect(invitee.getByText('Reviewer', { exact: true })).toBeVisible();
	await expect(invitee.getByLabel('E-mail')).toHaveValue(email);

	await invitee.getByLabel('Your name').fill('Rhea Invited');
	await invitee.getByLabel('Choose a password').fill('short');
	await invitee.getByLabel('Type it again').fill('short');
	await invitee.getByRole('button', { name: `Join ${WORKSPACE}` }).click();
	await expect(invitee.getByRole('alert')).toContainText('The password is too short');
	await expect(invitee.getByLabel('Your name')).toHaveValue('Rhea Invited');

	await invitee.getByLabel('Choose a password').fill('lantern-quarry-olive');
	await invitee.getByLabel('Type it again').fill('lantern-quarry-olive');
	await invitee.getByRole('button', { name: `Join ${WORKSPACE}` }).click();
	await expect(invitee).toHaveURL(/\/sessions$/);
	await expect(invitee.getByTestId('current-role')).toHaveText('Reviewer');
	await expect(invitee.getByText('Rhea Invited')).toBeVisible();
	await expect(invitee.getByRole('navigation', { name: 'Main' }).getByRole('link')).toHaveText(['Capture sessions']);

	// The link works once.
	const again = await invitee.goto(href!);
	expect(again?.status()).toBe(410);
	await expect(invitee.getByRole('heading', { level: 1 })).toHaveText(`This invitation to ${WORKSPACE} has already been used.`);
	await theirs.close();

	// The admin now sees them as a member, no longer as an open invitation.
	await page.goto('/admin/people');
	const row = page.getByRole('row').filter({ hasText: email });
	await expect(row).toHaveCount(1);
	await expect(row.getByRole('combobox', { name: 'Role of Rhea Invited' })).toHaveValue('reviewer');
	await expect(page.getByRole('region', { name: /Open invitations/ }).getByText(email)).toHaveCount(0);
});

test('an expired invitation link is refused with a clear explanation', async ({ browser, page, baseURL }) => {
	const api = await apiAs(baseURL, 'admin');
	const email = `late.${run}@example.test`;
	expect((await api.post('/api/admin/invitations', { data: { email, role: 'editor' } })).status()).toBe(201);
	const link = await linkInMail(api, email, '/invite/');

	const db = e2eDatabase();
	db.prepare('update invitations set expires_at = ? where email = ?').run(Date.now() - 60_000, email);
	db.close();

	const response = await page.goto(link);
	expect(response?.status()).toBe(410);
	await expect(page.getByText('410 · Expired')).toBeVisible();
	await expect(page.getByRole('heading', { level: 1 })).toContainText(`This invitation to ${WORKSPACE} expired on`);
	await expect(page.getByText('Ask an admin of the workspace to invite you again')).toBeVisible();
	await expect(page.getByLabel('Choose a password')).toHaveCount(0);

	const unknown = await page.goto('/invite/not-a-real-invitation-token');
	expect(unknown?.status()).toBe(404);
	await expect(page.getByRole('heading', { level: 1 })).toHaveText('This invitation link is not valid.');
});

test('a password reset through /forgot and the mailed link sets a new password and signs out other sessions', async ({ browser, page, baseURL }) => {
	const api = await apiAs(baseURL, 'admin');
	const person = await newPerson(browser, baseURL, api, 'processor', 'resetter');

	// Another browser where they are still signed in with the old password.
	const elsewhere = await browser.newContext({ baseURL });
	const otherPage = await elsewhere.newPage();
	await signInWith(otherPage, person.email, person.password);
	await expect(otherPage).toHaveURL(/\/sessions$/);

	await page.goto('/login');
	await page.getByRole('link', { name: 'Forgot it?' }).click();
	await expect(page.getByRole('heading', { name: 'Reset your password' })).toBeVisible();
	await page.getByLabel('E-mail').fill(person.email);
	await page.getByRole('button', { name: 'Send reset link' }).click();
	await expect(page.getByRole('status')).toContainText(`If an account exists for ${person.email}`);

	// An address without an account gets exactly the same answer.
	await page.goto('/forgot', { waitUntil: 'networkidle' });
	await page.getByLabel('E-mail').fill(`nobody.${run}@example.test`);
	await page.getByRole('button', { name: 'Send reset link' }).click();
	await expect(page.getByRole('status')).toContainText(`If an account exists for nobody.${run}@example.test`);

	// The admin's outbox shows the reset, because it was addressed to a member.
	const admin = await browser.newContext({ baseURL });
	const adminPage = await admin.newPage();
	await signInAs(adminPage, 'admin');
	await expect
		.poll(async () => {
			await adminPage.goto('/admin/outbox');
			return adminPage.getByRole('row').filter({ hasText: person.email }).filter({ hasText: 'Reset your Lockstep password' }).count();
		})
		.toBe(1);
	await openMailTo(adminPage, person.email, /Reset your Lockstep password/);
	const href = await adminPage.getByRole('link', { name: /\/reset\// }).getAttribute('href');
	expect(href).toMatch(/\/reset\/[\w-]{20,}$/);
	await admin.close();

	await page.goto(href!, { waitUntil: 'networkidle' });
	await expect(page.getByRole('heading', { name: 'Choose a new password' })).toBeVisible();
	await page.getByLabel('New password').fill('harbour-kestrel-violet');
	await page.getByLabel('Type it again').fill('harbour-kestrel-vilet');
	await page.getByRole('button', { name: 'Save new password' }).click();
	await expect(page.getByRole('alert')).toHaveText('The two passwords differ; type the same one twice.');
	await page.getByLabel('New password').fill('harbour-kestrel-violet');
	await page.getByLabel('Type it again').fill('harbour-kestrel-violet');
	await page.getByRole('button', { name: 'Save new password' }).click();
	await expect(page).toHaveURL(/\/login\?passwordSet=1$/);
	await expect(page.getByRole('status')).toHaveText('Your password is set. Sign in with it now.');

	// The other browser's session has ended.
	await otherPage.goto('/sessions');
	await expect(otherPage).toHaveURL(/\/login/);
	await elsewhere.close();

	await signInWith(page, person.email, 'harbour-kestrel-violet');
	await expect(page).toHaveURL(/\/sessions$/);
	await expect(page.getByTestId('current-role')).toHaveText('Processor');

	// The link works once.
	const reused = await page.goto(href!);
	expect(reused?.status()).toBe(410);
	await expect(page.getByRole('heading', { level: 1 })).toHaveText('This password reset link has already been used.');
});

test('an expired password reset link is refused', async ({ browser, page, baseURL }) => {
	const api = await apiAs(baseURL, 'admin');
	const person = await newPerson(browser, baseURL, api, 'editor', 'slowreader');
	await page.goto('/forgot', { waitUntil: 'networkidle' });
	await page.getByLabel('E-mail').fill(person.email);
	await page.getByRole('button', { name: 'Send reset link' }).click();
	await expect(page.getByRole('status')).toContainText('If an account exists');
	const link = await linkInMail(api, person.email, '/reset/');

	const db = e2eDatabase();
	db.prepare('update password_resets set expires_at = ? where user_id = (select id from users where email = ?)').run(Date.now() - 1000, person.email);
	db.close();

	const response = await page.goto(link);
	expect(response?.status()).toBe(410);
	await expect(page.getByRole('heading', { level: 1 })).toHaveText('This password reset link has expired.');
	await expect(page.getByText('Reset links work for one hour')).toBeVisible();
	await expect(page.getByRole('link', { name: 'Send a new link' })).toHaveAttribute('href', '/forgot');
});

test('repeated failed sign-ins for one account are throttled with 429 and Retry-After', async ({ page, request }) => {
	// A nonexistent address: it locks only itself, and uses 6 of the address's 50 allowed failures.
	const email = `throttle.${run}@example.test`;
	for (let attempt = 1; attempt <= 4; attempt++) {
		await signInWith(page, email, `wrong-${attempt}`);
		await expect(page.getByRole('alert')).toHaveText('That e-mail address and password do not match an active account.');
	}
	await signInWith(page, email, 'wrong-5');
	await expect(page.getByRole('alert')).toContainText('Too many failed sign-ins');

	// A plain form post (no JavaScript) gets the real status and header.
	const response = await request.post('/login', {
		form: { email, password: 'wrong-6' },
		headers: { accept: 'text/html', origin: new URL(page.url()).origin },
		maxRedirects: 0
	});
	expect(response.status()).toBe(429);
	expect(Number(response.headers()['retry-after'])).toBeGreaterThan(0);
	expect(await response.text()).toContain('Too many failed sign-ins');
});
