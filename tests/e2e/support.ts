import type { Page } from '@playwright/test';

export const DEMO_PASSWORD = 'demo-pass-2026';

/** Goes to a page and waits until it is hydrated, so typing is not undone by hydration. */
export async function open(page: Page, path: string) {
	await page.goto(path);
	await page.locator('body[data-hydrated="true"]').waitFor();
}

export async function signIn(page: Page, email: string, password = DEMO_PASSWORD) {
	await open(page, '/signin');
	await page.getByLabel('E-mail').fill(email);
	await page.getByLabel('Password').fill(password);
	await page.getByRole('button', { name: 'Sign in' }).click();
	await page.waitForURL('/');
}

/**
 * Drags down the time grid of a weekday column (e.g. 'wed') from one wall-clock hour to
 * another, as a person selects a slot with the mouse. The day column spans 00:00–24:00,
 * so an hour's line sits at its share of the column's height.
 */
export async function dragSlot(page: Page, weekday: string, fromHour: number, toHour: number) {
	const hh = String(fromHour).padStart(2, '0');
	const label = page.locator(`.ec-body .ec-sidebar time[datetime$="T${hh}:00:00"]`).first();
	await label.evaluate((el) => el.scrollIntoView({ block: 'center' }));
	const col = (await page.locator(`.ec-body .ec-day.ec-${weekday}`).first().boundingBox())!;
	const y = (hour: number) => col.y + (hour / 24) * col.height;
	const x = col.x + col.width / 2;
	await page.mouse.move(x, y(fromHour) + 3);
	await page.mouse.down();
	await page.mouse.move(x, (y(fromHour) + y(toHour)) / 2, { steps: 4 });
	await page.mouse.move(x, y(toHour) - 3, { steps: 4 });
	await page.mouse.up();
}
