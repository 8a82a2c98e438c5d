import { expect, test } from '@playwright/test';
import { signInAs } from './helpers';

test('the sessions list filters by name or site, status and capture date', async ({ page }) => {
	await signInAs(page, 'reviewer');
	const demo = page.getByRole('link', { name: 'Market Square fountain, lap 2' });
	await expect(demo).toBeVisible();

	await page.getByLabel('Search name or site').fill('wrenfield');
	await page.getByRole('button', { name: 'Filter' }).click();
	await expect(demo).toBeVisible();

	// The demo session was captured on 2026-11-14 (scripts/seed-demo-session.ts).
	await page.getByLabel('Captured from').fill('2026-11-15');
	await page.getByRole('button', { name: 'Filter' }).click();
	await expect(page.getByText('No capture sessions match these filters.')).toBeVisible();

	await page.getByLabel('Captured from').fill('2026-11-01');
	await page.getByLabel('to', { exact: true }).fill('2026-11-14');
	await page.getByRole('button', { name: 'Filter' }).click();
	await expect(demo).toBeVisible();

	await page.getByLabel('Status').selectOption('draft');
	await page.getByRole('button', { name: 'Filter' }).click();
	await expect(demo).toHaveCount(0);
	expect(new URL(page.url()).searchParams.get('status')).toBe('draft');
});
