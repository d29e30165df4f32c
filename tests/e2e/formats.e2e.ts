import { expect, test, type Page } from '@playwright/test';
import { formatDuration } from '../../src/lib/domain/time';
import { open, signIn } from './support';

// One facility format whatever the browser's language: a phone set to US English still reads
// dates written out and times on the 24-hour clock, the quota in hours, and taps buttons
// that are big enough for a finger.
test.use({
	locale: 'en-US',
	viewport: { width: 390, height: 844 },
	isMobile: true,
	hasTouch: true
});

async function boxId(page: Page, name: string): Promise<number> {
	const answer = await page.request.get('/api/boxes');
	const { boxes } = (await answer.json()) as { boxes: { id: number; name: string }[] };
	return boxes.find((b) => b.name === name)!.id;
}

test('the booking form writes the date out and keeps to the 24-hour clock', async ({ page }) => {
	await signIn(page, 'member@example.org');
	await open(page, '/calendar');
	const form = page.locator('form', { has: page.getByRole('heading', { name: 'Book time' }) });

	// Whatever order the browser shows the date field in, the date is written out beside it.
	const date = form.getByLabel('Date', { exact: true });
	await date.fill('2026-12-04');
	await expect(form.getByText('Friday 4 December 2026')).toBeVisible();
	await expect(date).toHaveAccessibleDescription(/Friday 4 December 2026/);

	// A time field with the number keyboard, no AM/PM: typed short, written as HH:MM.
	const start = form.getByLabel('Start', { exact: true });
	const end = form.getByLabel('End', { exact: true });
	await expect(start).toHaveAttribute('inputmode', 'numeric');
	await expect(start).toHaveAttribute('placeholder', 'HH:MM');
	await start.fill('930');
	await start.blur();
	await expect(start).toHaveValue('09:30');
	await end.fill('14:30');
	await end.blur();
	await expect(end).toHaveValue('14:30');
	await expect(end).not.toHaveAttribute('aria-invalid', 'true');
	await expect(form.getByText(/24-hour clock, facility time/)).toBeVisible();
	await expect(form).not.toContainText(/\b[AP]\.?M\.?\b/i);

	// A 12-hour reading is not guessed at: it is refused when the person leaves the field.
	await end.fill('2pm');
	await end.blur();
	await expect(end).toHaveAttribute('aria-invalid', 'true');
	await expect(form.getByText('Enter a time on the 24-hour clock')).toBeVisible();

	// Every button of the form is at least 44 px tall on a touch screen, every field too.
	for (const control of await form.locator('.btn, .btn-quiet, .btn-danger, .input').all()) {
		if (!(await control.isVisible())) continue;
		const box = (await control.boundingBox())!;
		expect(
			box.height,
			await control.evaluate((el) => el.outerHTML.slice(0, 80))
		).toBeGreaterThanOrEqual(44);
	}
	expect(await page.evaluate(() => document.documentElement.scrollWidth)).toBeLessThanOrEqual(390);
});

test('buttons on a box’s page are big enough to tap on a phone', async ({ page }) => {
	await signIn(page, 'member@example.org');
	await open(page, `/boxes/${await boxId(page, 'Kestrel')}`);
	const buttons = page.locator('main').locator('.btn, .btn-quiet, .btn-danger');
	const small: string[] = [];
	for (const button of await buttons.all()) {
		if (!(await button.isVisible())) continue;
		const box = (await button.boundingBox())!;
		if (box.height < 44 || box.width < 44)
			small.push(`${(await button.innerText()).trim()}: ${box.width}×${box.height}`);
	}
	expect(small).toEqual([]);
});

test('the box rules form takes the weekly quota in hours', async ({ page }) => {
	await signIn(page, 'manager@example.org');
	const id = await boxId(page, 'Kestrel');
	await open(page, `/manage/boxes/${id}`);
	const quota = page.getByLabel('Weekly quota per person (h)');
	await expect(quota).toHaveAttribute('inputmode', 'decimal');
	const hours = await quota.inputValue();
	expect(hours).toMatch(/^\d+(\.\d{1,2})?$/);

	// The box's page shows the same quota in hours (and minutes, if any).
	await open(page, `/boxes/${id}`);
	await expect(page.getByText(`${formatDuration(Number(hours) * 60)} per person`)).toBeVisible();
});
