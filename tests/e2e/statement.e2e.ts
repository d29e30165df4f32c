import { expect, test } from '@playwright/test';
import { readFileSync } from 'node:fs';
import { DateTime } from 'luxon';
import { eq } from 'drizzle-orm';
import { formatMoney, toCents } from '../../src/lib/domain/money';
import { bookings, boxes, researchGroups } from '../../src/lib/server/db/schema';
import { closeTestDb, testDb, userIdByEmail } from '../support/db';
import { open, signIn } from './support';

const tz = process.env.FACILITY_TZ ?? 'Europe/Berlin';
const currency = (process.env.FACILITY_CURRENCY || 'EUR').trim().toUpperCase();

test('a PI opens the group’s statement for last month and downloads the CSV', async ({ page }) => {
	// A booking of the member's on the 10th of last month, so the statement has a line of its
	// own whatever day of the month the test runs (the demo's bookings span only ±14 days).
	const db = testDb();
	const [group] = await db
		.select({ id: researchGroups.id })
		.from(researchGroups)
		.where(eq(researchGroups.name, 'Organometallic Synthesis'));
	const [kestrel] = await db
		.select({ id: boxes.id, rate: boxes.rateInternal })
		.from(boxes)
		.where(eq(boxes.name, 'Kestrel'));
	const start = DateTime.now()
		.setZone(tz)
		.startOf('month')
		.minus({ months: 1 })
		.set({ day: 10, hour: 9 });
	const purpose = `Statement line ${Date.now().toString(36)}`;
	const [made] = await db
		.insert(bookings)
		.values({
			boxId: kestrel.id,
			userId: await userIdByEmail('member@example.org'),
			groupId: group.id,
			startAt: start.toJSDate(),
			endAt: start.plus({ hours: 2 }).toJSDate(),
			blockedUntil: start.plus({ hours: 2 }).toJSDate(),
			purpose,
			status: 'completed',
			confirmedAt: start.minus({ days: 3 }).toJSDate()
		})
		.$returningId();
	await closeTestDb();

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
	// The month written out ("November 2026"), in the facility's language whatever the browser's.
	const monthName = DateTime.fromFormat(lastMonth, 'yyyy-MM', { locale: 'en-GB' }).toFormat(
		'LLLL yyyy'
	);
	await expect(
		page.getByRole('heading', { name: `Statement for ${monthName}: Organometallic Synthesis` })
	).toBeVisible();
	await expect(page.getByTestId('statement-group')).toHaveText('Organometallic Synthesis');
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
	// The page shows the CSV's plain total with the currency (e.g. 84.38 → €84.38).
	expect(total).toBe(formatMoney(toCents(last.at(-1)!), currency));
	// One CSV line per line of the page's table (subtotals aside), and the booking made above
	// among them, billed.
	const table = page.getByTestId('statement-table');
	expect(lines.length - 2).toBe(await table.locator('tr[data-line]').count());
	// Every amount carries the currency: each line's, each box's subtotal and the total.
	const sign = formatMoney(0, currency).replace(/[\d.,\s]/g, '');
	const amounts = [
		...(await table.locator('tr[data-line] td:last-child').allTextContents()),
		...(await table.getByTestId('box-subtotal').allTextContents()),
		total
	];
	for (const amount of amounts) expect(amount).toContain(sign);
	await expect(table.locator(`tr[data-line="${made.id}"]`)).toContainText(
		formatMoney(toCents(2 * kestrel.rate), currency)
	);
	expect(Number(last.at(-1))).toBeGreaterThan(0);
	// 2 h at Kestrel's internal rate, not checked in: billed as booked.
	const line = lines.find((l) => l.startsWith(`${made.id},Kestrel,`))!.split(',');
	expect(line[5]).toBe('booked_not_checked_in');
	expect(line.at(-1)).toBe((2 * kestrel.rate).toFixed(2));

	// The month in progress has no statement yet: a clear refusal, not a page of zeros.
	const thisMonth = DateTime.now().setZone(tz).toFormat('yyyy-MM');
	await open(page, page.url().replace(lastMonth, thisMonth));
	await expect(page.getByText(`${thisMonth} is not over yet`)).toBeVisible();
});
