import { expect, test } from '@playwright/test';
import { readFileSync } from 'node:fs';
import { DateTime } from 'luxon';
import { open, signIn } from './support';

const tz = process.env.FACILITY_TZ ?? 'Europe/Berlin';

test('a PI opens the group’s statement for last month and downloads the CSV', async ({ page }) => {
	await signIn(page, 'pi@example.org');
	await page.getByRole('link', { name: 'Groups' }).click();
	// A PI of one group lands on its page.
	await expect(page.getByRole('heading', { name: 'Organometallic Synthesis' })).toBeVisible();
	await expect(page.getByRole('heading', { name: /this month so far/i })).toBeVisible();

	const lastMonth = DateTime.now()
		.setZone(tz)
		.startOf('month')
		.minus({ months: 1 })
		.toFormat('yyyy-MM');
	await page.getByRole('link', { name: lastMonth, exact: true }).click();
	await page.locator('body[data-hydrated="true"]').waitFor();
	await expect(
		page.getByRole('heading', { name: `Statement ${lastMonth}: Organometallic Synthesis` })
	).toBeVisible();
	const total = (await page.getByTestId('statement-total').textContent())!.trim();

	const [download] = await Promise.all([
		page.waitForEvent('download'),
		page.getByRole('link', { name: 'Download CSV' }).click()
	]);
	expect(download.suggestedFilename()).toBe(`Organometallic-Synthesis-${lastMonth}.csv`);
	const lines = readFileSync((await download.path())!, 'utf8')
		.trimEnd()
		.split('\r\n');
	expect(lines[0]).toBe(
		'booking_id,box,booked_by,start,end,status,reason,booked_hours,used_hours,billed_hours,rate,amount'
	);
	const last = lines.at(-1)!.split(',');
	expect(last[0]).toBe('total');
	expect(last.at(-1)).toBe(total);

	// The month in progress has no statement yet: a clear refusal, not a page of zeros.
	const thisMonth = DateTime.now().setZone(tz).toFormat('yyyy-MM');
	await open(page, page.url().replace(lastMonth, thisMonth));
	await expect(page.getByText(`${thisMonth} is not over yet`)).toBeVisible();
});
