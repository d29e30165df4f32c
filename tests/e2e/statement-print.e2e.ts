import { expect, test, type Page } from '@playwright/test';
import { DateTime } from 'luxon';
import { formatMoney } from '../../src/lib/domain/money';
import { bookings } from '../../src/lib/server/db/schema';
import { closeTestDb, makeBox, makeGroup, makeUser, testDb } from '../support/db';
import { open, signIn } from './support';

const tz = process.env.FACILITY_TZ ?? 'Europe/Berlin';
const currency = (process.env.FACILITY_CURRENCY || 'EUR').trim().toUpperCase();
// A month long over and closed by no test, so the statement is worked out from the rows below.
const MONTH = '2025-06';

type Made = { groupId: number; groupName: string; pi: { email: string; password: string } };

/**
 * A fresh group with eleven bookings in June 2025 on two boxes of its own, one of each way a
 * booking is billed (or not): the printed page must hold all eleven. Amounts by hand, 2 h
 * each: box A at 12.50 an hour: used 25.00, not checked in 25.00, no-show freed after 15 min
 * 3.13 (3.125 half up), late cancellation 25.00, outage and manager cancellations 0, used
 * 25.00 = 103.13; box B at 8.00: 16.00 + 16.00 + 2.00 + 16.00 = 50.00; total 153.13.
 */
async function statementWithElevenLines(): Promise<Made> {
	const group = await makeGroup('print');
	const member = await makeUser('member', { group: group.id });
	const boxA = await makeBox({
		name: `Print A ${group.id}`,
		rateInternal: 12.5,
		cancelWindowHours: 24
	});
	const boxB = await makeBox({
		name: `Print B ${group.id}`,
		rateInternal: 8,
		cancelWindowHours: 24
	});
	const at = (day: number) =>
		DateTime.fromObject({ year: 2025, month: 6, day, hour: 9 }, { zone: tz });
	const row = (boxId: number, day: number, extra: Partial<typeof bookings.$inferInsert> = {}) => {
		const start = at(day);
		return {
			boxId,
			userId: member.id,
			groupId: group.id,
			startAt: start.toJSDate(),
			endAt: start.plus({ hours: 2 }).toJSDate(),
			blockedUntil: start.plus({ hours: 2 }).toJSDate(),
			purpose: 'Printed statement test',
			status: 'completed' as const,
			confirmedAt: start.minus({ days: 1 }).toJSDate(),
			...extra
		};
	};
	const used = (day: number) => ({
		checkInAt: at(day).plus({ minutes: 5 }).toJSDate(),
		checkOutAt: at(day).plus({ minutes: 110 }).toJSDate()
	});
	const noShow = (day: number) => ({
		status: 'no_show' as const,
		blockedUntil: at(day).plus({ minutes: 15 }).toJSDate()
	});
	const cancelled = (day: number, cause: 'user' | 'outage' | 'manager', hoursBefore: number) => ({
		status: 'cancelled' as const,
		cancelCause: cause,
		cancelledAt: at(day).minus({ hours: hoursBefore }).toJSDate()
	});
	await testDb()
		.insert(bookings)
		.values([
			row(boxA, 2, used(2)),
			row(boxA, 3),
			row(boxA, 4, noShow(4)),
			row(boxA, 5, cancelled(5, 'user', 2)),
			row(boxA, 6, cancelled(6, 'outage', 1)),
			row(boxA, 9, cancelled(9, 'manager', 30)),
			row(boxA, 10, used(10)),
			row(boxB, 11, used(11)),
			row(boxB, 12),
			row(boxB, 13, noShow(13)),
			row(boxB, 16, cancelled(16, 'user', 3))
		]);
	await closeTestDb();
	return { groupId: group.id, groupName: group.name, pi: group.pi };
}

/** Pages of a PDF: its /Type /Page objects (not the /Pages tree). */
const pageCount = (pdf: Buffer) =>
	(pdf.toString('latin1').match(/\/Type\s*\/Page[^s]/g) ?? []).length;

async function fontsLoaded(page: Page) {
	await page.evaluate(() => document.fonts.ready.then(() => undefined));
}

test('a statement of eleven lines prints on one page of A4 and of Letter, without the shell', async ({
	page
}) => {
	const made = await statementWithElevenLines();
	await signIn(page, made.pi.email, made.pi.password);
	await open(page, `/groups/${made.groupId}/statements/${MONTH}`);
	await expect(
		page.getByRole('heading', { level: 1, name: `Statement for June 2025: ${made.groupName}` })
	).toBeVisible();

	const table = page.getByTestId('statement-table');
	await expect(table.locator('tr[data-line]')).toHaveCount(11);
	// A subtotal per box, then the total, every amount with the currency.
	await expect(table.getByTestId('box-subtotal')).toHaveText([
		formatMoney(10313, currency),
		formatMoney(5000, currency)
	]);
	await expect(page.getByTestId('statement-total')).toHaveText(formatMoney(15313, currency));
	const sign = formatMoney(0, currency).replace(/[\d.,\s]/g, '');
	for (const amount of await table.locator('tr[data-line] td:last-child').allTextContents())
		expect(amount).toContain(sign);
	await expect(page.getByRole('button', { name: 'Print' })).toBeVisible();

	// Printed: the sidebar, the buttons and the grey background go; the statement takes the
	// whole width, as a table (never the phone's cards).
	await page.emulateMedia({ media: 'print' });
	await expect(page.getByRole('navigation', { name: 'Main' })).toBeHidden();
	await expect(page.getByRole('button', { name: 'Print' })).toBeHidden();
	await expect(page.getByRole('link', { name: 'Download CSV' })).toBeHidden();
	const main = (await page.locator('#main').boundingBox())!;
	expect(main.x).toBeLessThan(20);
	expect(main.width).toBeGreaterThan(600);
	expect(
		await page.evaluate(() => getComputedStyle(document.documentElement).backgroundColor)
	).toBe('rgb(255, 255, 255)');
	await expect(table).toBeVisible();
	await expect(page.locator('[data-card]').first()).toBeHidden();
	await expect(page.getByTestId('facility-name')).toBeVisible();
	await expect(page.getByTestId('statement-group')).toHaveText(made.groupName);
	await expect(page.getByTestId('statement-issued')).toHaveText(/^\d{1,2} [A-Z][a-z]+ \d{4}$/);
	await expect(page.getByTestId('statement-total')).toHaveText(formatMoney(15313, currency));
	// "Why billed" wraps as a sentence, not a word per line.
	const why = (await table.locator('tr[data-line] td:nth-child(3)').first().boundingBox())!;
	expect(why.width).toBeGreaterThan(180);

	// Chromium's own print, on both papers: one page each, nothing past the right edge.
	await fontsLoaded(page);
	for (const format of ['A4', 'Letter'] as const) {
		const pdf = await page.pdf({ format });
		expect(pdf.subarray(0, 5).toString('latin1')).toBe('%PDF-');
		expect(pageCount(pdf), `${format} pages`).toBe(1);
	}
	// Laid out at the printable width of the narrower paper (A4 at 14 mm margins: 182 mm,
	// 688 px), the statement does not run off the right edge.
	await page.setViewportSize({ width: 688, height: 1017 });
	expect(await page.evaluate(() => document.documentElement.scrollWidth)).toBeLessThanOrEqual(688);
});

test.describe('on a phone', () => {
	test.use({ viewport: { width: 390, height: 844 }, isMobile: true, hasTouch: true });

	test('the statement’s lines are cards and nothing scrolls sideways', async ({ page }) => {
		const made = await statementWithElevenLines();
		await signIn(page, made.pi.email, made.pi.password);
		await open(page, `/groups/${made.groupId}/statements/${MONTH}`);
		await expect(page.locator('[data-card]')).toHaveCount(11);
		await expect(page.getByTestId('statement-table')).toBeHidden();
		await expect(page.locator('[data-card]').first()).toContainText(formatMoney(2500, currency));
		await expect(page.getByTestId('statement-total')).toHaveText(formatMoney(15313, currency));
		await expect(page.getByRole('button', { name: 'Print' })).toBeVisible();
		expect(await page.evaluate(() => document.documentElement.scrollWidth)).toBeLessThanOrEqual(
			390
		);
	});
});
