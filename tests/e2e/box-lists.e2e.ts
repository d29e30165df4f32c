import { expect, test, type Page } from '@playwright/test';
import { atmosphereReadings, outages } from '../../src/lib/server/db/schema';
import { closeTestDb, fitGloves, makeBox, makeUser, testDb } from '../support/db';
import { open, signIn } from './support';

test.afterAll(closeTestDb);

async function fitsThePhone(page: Page) {
	expect(await page.evaluate(() => document.documentElement.scrollWidth)).toBeLessThanOrEqual(390);
}

const sources = ['manual', 'check_in', 'check_out', 'csv'] as const;

test.describe('at a desk', () => {
	test.use({ viewport: { width: 1440, height: 900 } });

	test('all of a box’s readings: sorted and filtered by the address, kept on reload', async ({
		page
	}) => {
		const boxId = await makeBox();
		// 80 readings an hour apart on a fixed day; O2 rises with each one.
		await testDb()
			.insert(atmosphereReadings)
			.values(
				Array.from({ length: 80 }, (_, i) => ({
					boxId,
					at: new Date(Date.UTC(2025, 4, 1, 0, 0, 0) + i * 3_600_000),
					o2Ppm: Number((0.2 + i / 100).toFixed(2)),
					h2oPpm: 0.4,
					source: sources[i % 4]
				}))
			);
		const member = await makeUser('member');
		await signIn(page, member.email, member.password);
		await open(page, `/boxes/${boxId}`);
		await page.getByRole('link', { name: 'All readings (80)' }).click();
		await page.waitForURL(`**/boxes/${boxId}/readings`);
		await page.locator('body[data-hydrated="true"]').waitFor();
		await expect(page.getByRole('navigation', { name: /pages/ })).toContainText('1–50 of 80');

		// Sorting by O2 goes through the address; a second click turns it round.
		await page.getByRole('link', { name: /^O₂ \(ppm\)/ }).click();
		await expect(page).toHaveURL(/sort=o2&dir=asc/);
		await page.getByRole('link', { name: /^O₂ \(ppm\)/ }).click();
		await expect(page).toHaveURL(/sort=o2&dir=desc/);
		await page.getByRole('combobox', { name: /^From/ }).selectOption({ label: 'sensor log' });
		await page.getByRole('button', { name: 'Show' }).click();
		await expect(page).toHaveURL(/source=csv/);
		await expect(page.getByRole('navigation', { name: /pages/ })).toContainText('20 in all');

		await page.reload();
		await page.locator('body[data-hydrated="true"]').waitFor();
		await expect(page.getByRole('columnheader', { name: /O₂/ })).toHaveAttribute(
			'aria-sort',
			'descending'
		);
		await expect(page.getByRole('combobox', { name: /^From/ })).toHaveValue('csv');
		const rows = page.getByRole('row');
		// The header, then the highest sensor-log reading (i = 79: 0.99 ppm).
		await expect(rows.nth(1)).toContainText('0.99');
		await expect(rows.nth(1)).toContainText('sensor log');
		await expect(rows).toHaveCount(21);
	});
});

test.describe('on a phone', () => {
	test.use({ viewport: { width: 390, height: 844 }, isMobile: true, hasTouch: true });

	test('a planned glove change names each port on its button', async ({ page }) => {
		const boxId = await makeBox();
		const right = (await fitGloves(boxId)).find((p) => p.position === 'front-right')!;
		const start = new Date(Date.now() + 200 * 86_400_000);
		await testDb()
			.insert(outages)
			.values({
				boxId,
				startAt: start,
				endAt: new Date(start.getTime() + 2 * 3_600_000),
				kind: 'glove_change',
				reason: 'Planned glove change'
			});
		const manager = await makeUser('manager');
		await signIn(page, manager.email, manager.password);
		await open(page, `/boxes/${boxId}`);
		const out = page.getByRole('region', { name: 'Out of service' });
		await expect(
			out.getByRole('link', { name: 'Start glove change — left port, front' })
		).toBeVisible();
		const button = out.getByRole('link', { name: 'Start glove change — right port, front' });
		await expect(button).toBeVisible();
		await fitsThePhone(page);
		await button.click();
		await page.waitForURL(`**/boxes/${boxId}/ports/${right.id}/change`);
	});

	test('the readings, leak tests, upkeep log and outbox fit a phone', async ({ page }) => {
		const manager = await makeUser('manager');
		await signIn(page, manager.email, manager.password);
		for (const path of [
			'/boxes/1/readings',
			'/boxes/1/readings?source=manual&from=2025-01-01&to=2030-12-31',
			'/boxes/1/leak-tests?result=pass',
			'/boxes/1/maintenance?q=purifier',
			'/manage/outbox?status=sent',
			'/manage/approvals',
			'/manage/gloves?low=yes'
		]) {
			await open(page, path);
			await fitsThePhone(page);
		}
	});
});
