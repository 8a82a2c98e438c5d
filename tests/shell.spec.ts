import { expect, test } from '@playwright/test';
import { PEOPLE, signInAs, type DemoRole } from './helpers';

// What each role's navigation offers (DESIGN.md, "People and roles").
const NAVIGATION: Record<Exclude<DemoRole, 'outsider'>, string[]> = {
	admin: ['Capture sessions', 'People', 'API tokens', 'Import folders', 'Outbox'],
	editor: ['Capture sessions'],
	reviewer: ['Capture sessions'],
	processor: ['Capture sessions']
};

for (const [role, links] of Object.entries(NAVIGATION) as [keyof typeof NAVIGATION, string[]][]) {
	test(`${role} signs in and sees the navigation of the role`, async ({ page }) => {
		await signInAs(page, role);
		const nav = page.getByRole('navigation', { name: 'Main' });
		await expect(nav.getByRole('link')).toHaveText(links);
		await expect(page.getByTestId('current-role')).toHaveText(role[0].toUpperCase() + role.slice(1));
		await expect(page.getByText(PEOPLE[role].name)).toBeVisible();
		const newSession = page.getByRole('link', { name: 'New capture session' });
		if (role === 'editor') await expect(newSession).toBeVisible();
		else await expect(newSession).toHaveCount(0);
	});
}

test('signing out ends the session, and sign-out is POST only', async ({ page, request }) => {
	await signInAs(page, 'reviewer');
	await page.getByRole('button', { name: 'Sign out' }).click();
	await expect(page).toHaveURL(/\/login\?signedOut=1$/);
	await expect(page.getByRole('status')).toHaveText('You are signed out.');
	await page.goto('/sessions');
	await expect(page).toHaveURL(/\/login\?next=%2Fsessions$/);
	const viaGet = await request.get('/logout', { maxRedirects: 0 });
	expect(viaGet.status()).toBe(405);
});

test('a wrong password gets a clear message and keeps the address typed', async ({ page }) => {
	await page.goto('/login');
	await page.getByLabel('E-mail').fill(PEOPLE.processor.email);
	await page.getByLabel('Password').fill('not-the-password');
	await page.getByRole('button', { name: 'Sign in' }).click();
	await expect(page.getByRole('alert')).toHaveText('That e-mail address and password do not match an active account.');
	await expect(page.getByLabel('E-mail')).toHaveValue(PEOPLE.processor.email);
});

test('the sign-in page and the shell look finished (screenshots)', async ({ page }) => {
	await page.setViewportSize({ width: 1360, height: 860 });
	await page.emulateMedia({ colorScheme: 'dark' });
	await page.goto('/login');
	await expect(page.getByRole('heading', { name: 'Sign in' })).toBeVisible();
	await page.screenshot({ path: 'screens/login-dark.png' });
	await signInAs(page, 'admin');
	await page.screenshot({ path: 'screens/shell-dark.png' });
	await page.emulateMedia({ colorScheme: 'light' });
	await page.screenshot({ path: 'screens/shell-light.png' });
	// Keyboard focus is visible: the first focusable element gets an outline.
	await page.keyboard.press('Tab');
	const outline = await page.evaluate(() => getComputedStyle(document.activeElement as Element).outlineStyle);
	expect(outline).toBe('solid');
});
