// Printed box labels and the phone page they open: the sheet holds one QR code per box,
// and following a label's address on a phone, not signed in, goes through sign-in and
// back to the box's phone page, where a member logs a reading.
import { expect, test } from '@playwright/test';
import { open, signIn } from './support';

test.use({ viewport: { width: 1440, height: 900 } });

test('a label’s code opens the box’s phone page through sign-in, where a reading is logged', async ({
	page,
	browser
}) => {
	await signIn(page, 'manager@example.org');
	const listed = await page.request.get('/api/boxes');
	expect(listed.status()).toBe(200);
	const { boxes } = (await listed.json()) as { boxes: { id: number }[] };
	expect(boxes.length).toBeGreaterThan(0);

	await open(page, '/manage/labels');
	const labels = page.locator('[data-box-id]');
	await expect(labels).toHaveCount(boxes.length);
	// One QR code, drawn as SVG, on every label.
	await expect(labels.locator('svg')).toHaveCount(boxes.length);
	expect(
		(await labels.evaluateAll((els) => els.map((e) => e.getAttribute('data-box-id')))).sort()
	).toEqual(boxes.map((b) => String(b.id)).sort());
	await expect(page.getByRole('button', { name: 'Print labels' })).toBeVisible();

	const first = labels.first();
	const url = (await first.getAttribute('data-url'))!;
	const boxId = await first.getAttribute('data-box-id');
	expect(url).toMatch(new RegExp(`^https?://[^/]+/boxes/${boxId}/here$`));
	// The address is printed under the code too, for a phone that cannot scan.
	await expect(first.locator('[data-label-url]')).toHaveText(url);

	// A phone at the box, not signed in, follows the code's address.
	const phone = await browser.newContext({
		viewport: { width: 390, height: 844 },
		isMobile: true,
		hasTouch: true
	});
	try {
		const p = await phone.newPage();
		await open(p, url);
		await expect(p).toHaveURL(/\/signin\?next=/);
		await p.getByLabel('E-mail').fill('member@example.org');
		await p.getByLabel('Password').fill('demo-pass-2026');
		await p.getByRole('button', { name: 'Sign in' }).click();
		await p.waitForURL(url);
		await p.locator('body[data-hydrated="true"]').waitFor();
		await expect(p.getByRole('heading', { level: 1 })).toBeVisible();

		// Values no other test types, under any warn level, with three decimals as stored.
		const stamp = Date.now() % 300;
		const o2 = (0.1 + stamp / 1000 + 0.001).toFixed(3);
		const h2o = (0.5 - stamp / 1000 - 0.001).toFixed(3);
		await p.getByText('Log a reading').click();
		const form = p.locator('form[action="?/reading"]');
		await form.getByLabel('O₂ (ppm)').fill(o2);
		await form.getByLabel('H₂O (ppm)').fill(h2o);
		await form.getByRole('button', { name: 'Record reading' }).click();
		await expect(p.getByRole('status').filter({ hasText: 'Reading recorded' })).toBeVisible();

		// It is now the box's latest reading, read just now.
		const latest = p.locator('[data-latest-reading]');
		await expect
			.poll(async () => Number(await latest.locator('[data-o2]').textContent()))
			.toBe(Number(o2));
		expect(Number(await latest.locator('[data-h2o]').textContent())).toBe(Number(h2o));
		await expect(latest).toContainText('just now');

		// Nothing on the phone page scrolls sideways.
		expect(await p.evaluate(() => document.documentElement.scrollWidth)).toBeLessThanOrEqual(390);
		await p.getByText('Report a damaged glove').click();
		expect(await p.evaluate(() => document.documentElement.scrollWidth)).toBeLessThanOrEqual(390);
	} finally {
		await phone.close();
	}
});
