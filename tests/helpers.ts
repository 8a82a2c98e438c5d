import { expect, request, type APIRequestContext, type Page } from '@playwright/test';
import Database from 'better-sqlite3';

/** The demo people seeded by scripts/seed.ts into "Fieldglass Capture Studio". */
export const PEOPLE = {
	admin: { email: 'ada.admin@lockstep.test', password: 'demo-admin-2026', name: 'Ada Okafor' },
	editor: { email: 'eli.editor@lockstep.test', password: 'demo-editor-2026', name: 'Eli Marchetti' },
	reviewer: { email: 'rae.reviewer@lockstep.test', password: 'demo-reviewer-2026', name: 'Rae Lindqvist' },
	processor: { email: 'pia.processor@lockstep.test', password: 'demo-processor-2026', name: 'Pia Novak' },
	/** An editor of the other workspace only ("Tidewater Survey Unit"). */
	outsider: { email: 'tove.tidewater@lockstep.test', password: 'demo-tidewater-2026', name: 'Tove Brandt' }
} as const;
export type DemoRole = keyof typeof PEOPLE;

export async function signInAs(page: Page, role: DemoRole): Promise<void> {
	await signInWith(page, PEOPLE[role].email, PEOPLE[role].password);
	await expect(page).toHaveURL(/\/sessions$/);
}

/** An API request context signed in as a demo person, through the sign-in form as a browser would. */
export async function apiAs(baseURL: string | undefined, role: DemoRole): Promise<APIRequestContext> {
	const context = await request.newContext({ baseURL, extraHTTPHeaders: { origin: baseURL ?? '' } });
	const response = await context.post('/login', {
		headers: { accept: 'text/html' },
		form: { email: PEOPLE[role].email, password: PEOPLE[role].password },
		maxRedirects: 0
	});
	expect(response.status(), `sign-in of ${role}`).toBe(303);
	return context;
}

export async function signInWith(page: Page, email: string, password: string): Promise<void> {
	await page.goto('/login');
	await page.getByLabel('E-mail').fill(email);
	await page.getByLabel('Password').fill(password);
	await page.getByRole('button', { name: 'Sign in' }).click();
}

/** The browser tests' own database (see playwright.config.ts), for checks a page cannot show. */
export function e2eDatabase(): Database.Database {
	const db = new Database('data/e2e/lockstep.db');
	db.pragma('busy_timeout = 5000');
	return db;
}
