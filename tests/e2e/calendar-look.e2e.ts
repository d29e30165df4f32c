import { expect, test, type Page } from '@playwright/test';
import { DateTime } from 'luxon';
import { dayHeading } from '../../src/lib/domain/calendar-view';
import { formatRange } from '../../src/lib/domain/time';
import { sunkMail } from '../support/mail';
import { facilityTz, slot } from '../support/time';
import { DEMO_PASSWORD, open, signIn } from './support';

// A week far from the demo's bookings, fixed by the calendar's ?date= (Mon 2 – Sun 8 Dec 2030).
const MONDAY = '2030-12-02';
const WEDNESDAY = '2030-12-04';

const headings = (page: Page) => page.locator('.ec-header .ec-col-head');
const dayColumns = (page: Page) => page.locator('.ec-body .ec-day');
const pageWidth = (page: Page) => page.evaluate(() => document.documentElement.scrollWidth);

/** A finger drawn sideways across the grid (Chromium's touch input, as a phone sends it). */
async function swipe(page: Page, from: { x: number; y: number }, dx: number) {
	const cdp = await page.context().newCDPSession(page);
	await cdp.send('Input.dispatchTouchEvent', { type: 'touchStart', touchPoints: [from] });
	for (let i = 1; i <= 6; i++) {
		await cdp.send('Input.dispatchTouchEvent', {
			type: 'touchMove',
			touchPoints: [{ x: from.x + (dx * i) / 6, y: from.y }]
		});
	}
	await cdp.send('Input.dispatchTouchEvent', { type: 'touchEnd', touchPoints: [] });
	await cdp.detach();
}

test.describe('on a 390 px phone', () => {
	test.use({ viewport: { width: 390, height: 844 }, isMobile: true, hasTouch: true });

	test('the calendar shows one day, turns days by button and swipe, and books a tapped hour', async ({
		page
	}) => {
		await signIn(page, 'member@example.org');
		await open(page, `/calendar?view=week&date=${MONDAY}`);

		// One day column, not seven squeezed ones, and nothing wider than the phone.
		await expect(dayColumns(page)).toHaveCount(1);
		await expect(headings(page)).toHaveText(['Mon 2 Dec']);
		await expect(page.getByTestId('calendar-title')).toHaveText('Monday 2 December 2030');
		expect(await pageWidth(page)).toBeLessThanOrEqual(390);

		await page.getByRole('button', { name: 'Next day' }).click();
		await expect(headings(page)).toHaveText(['Tue 3 Dec']);
		await page.getByRole('button', { name: 'Previous day' }).click();
		await expect(headings(page)).toHaveText(['Mon 2 Dec']);

		// A swipe to the left is the next day, to the right the one before.
		await page.getByTestId('calendar').evaluate((el) => el.scrollIntoView({ block: 'start' }));
		const grid = (await dayColumns(page).first().boundingBox())!;
		const shown = (await page.locator('.ec-main').boundingBox())!;
		const middle = { x: grid.x + grid.width / 2, y: shown.y + shown.height / 2 };
		await swipe(page, { x: middle.x + 100, y: middle.y }, -200);
		await expect(headings(page)).toHaveText(['Tue 3 Dec']);
		await swipe(page, { x: middle.x - 100, y: middle.y }, 200);
		await expect(headings(page)).toHaveText(['Mon 2 Dec']);
		expect(await pageWidth(page)).toBeLessThanOrEqual(390);

		// A tap on an empty time fills the booking form with the hour from there.
		const label = page.locator('.ec-body .ec-sidebar time[datetime$="T08:00:00"]').first();
		await label.evaluate((el) => el.scrollIntoView({ block: 'center' }));
		const column = (await dayColumns(page).first().boundingBox())!;
		await page.touchscreen.tap(column.x + column.width / 2, column.y + (8.25 / 24) * column.height);
		await expect(page.getByLabel('Start', { exact: true })).toHaveValue('08:00');
		await expect(page.getByLabel('End', { exact: true })).toHaveValue('09:00');
		await expect(page.getByLabel('Purpose')).toBeFocused();

		// The phone's own Book button offers the day on screen.
		await page.getByRole('button', { name: 'Next day' }).click();
		await expect(page.getByRole('button', { name: 'Book on Tue 3 Dec' })).toBeVisible();
	});

	test('the development mail page shows a message decoded and fits the phone', async ({
		page,
		request
	}) => {
		// The member books Kestrel; the confirmation's subject carries an en dash, so it is
		// sent as an encoded word (=?UTF-8?Q?…?=) that the page must decode.
		await request.post('/api/session', {
			data: { email: 'member@example.org', password: DEMO_PASSWORD }
		});
		const { boxes } = (await (await request.get('/api/boxes')).json()) as {
			boxes: { id: number; name: string }[];
		};
		const kestrel = boxes.find((b) => b.name === 'Kestrel')!;
		// Weeks ahead, at night: clear of the demo's bookings and of the other tests' slots.
		const times = slot(18, 3, 60);
		const purpose = `Mail page ${Date.now().toString(36)}`;
		const made = await request.post('/api/bookings', {
			data: { boxId: kestrel.id, ...times, purpose }
		});
		expect(made.status()).toBe(201);
		const { booking } = (await made.json()) as { booking: { id: number } };
		try {
			const subject = `Booked: Kestrel, ${formatRange(new Date(times.start), new Date(times.end), facilityTz)}`;
			let file = '';
			await expect
				.poll(
					() => {
						const found = sunkMail().find((m) => m.raw.includes(`booking-${booking.id}@boxwright`));
						file = found?.file ?? '';
						return found?.subject;
					},
					{ timeout: 20_000 }
				)
				.toBe(subject);

			await signIn(page, 'manager@example.org');
			await open(page, '/dev/mail');
			const row = page.locator(`a[href="/dev/mail/${file}"]`);
			await expect(row).toContainText(subject);
			await expect(row).toContainText('member@example.org');
			await expect(page.getByTestId('mail-list')).not.toContainText('=?UTF-8?');
			expect(await pageWidth(page)).toBeLessThanOrEqual(390);

			await row.click();
			await page.waitForURL(`**/dev/mail/${file}`);
			await expect(page.getByTestId('mail-subject')).toHaveText(subject);
			await expect(page.getByText('member@example.org').first()).toBeVisible();
			await expect(page.getByTestId('mail-text')).toContainText(purpose);
			const attachments = page.getByTestId('mail-attachments');
			await expect(attachments).toContainText('booking.ics');
			await expect(attachments).toContainText('application/ics');
			// The raw source is there, folded away.
			const raw = page.getByText('Raw source');
			await expect(raw).toBeVisible();
			await expect(page.getByText(/=\?UTF-8\?Q\?/i)).toBeHidden();
			expect(await pageWidth(page)).toBeLessThanOrEqual(390);
		} finally {
			await request.delete(`/api/bookings/${booking.id}`);
		}
	});
});

test.describe('at a 1440 px desk', () => {
	test.use({ viewport: { width: 1440, height: 900 } });

	test('the week reads in the facility format with Boxwright’s own toolbar', async ({ page }) => {
		await signIn(page, 'member@example.org');
		await open(page, `/calendar?view=week&date=${WEDNESDAY}`);

		await expect(dayColumns(page)).toHaveCount(7);
		await expect(headings(page)).toHaveText([
			'Mon 2 Dec',
			'Tue 3 Dec',
			'Wed 4 Dec',
			'Thu 5 Dec',
			'Fri 6 Dec',
			'Sat 7 Dec',
			'Sun 8 Dec'
		]);
		await expect(page.getByTestId('calendar-title')).toHaveText('2–8 Dec 2030');
		// The hours on the 24-hour clock.
		await expect(page.locator('.ec-body .ec-sidebar time[datetime$="T15:00:00"]')).toHaveText(
			'15:00'
		);

		// Our buttons, not the widget's: "Today" capitalised, previous and next in words.
		await expect(page.locator('.ec-toolbar')).toBeHidden();
		const today = page.getByRole('button', { name: 'Today', exact: true });
		await expect(today).toHaveText('Today');
		await page.getByRole('button', { name: 'Next week' }).click();
		await expect(page.getByTestId('calendar-title')).toHaveText('9–15 Dec 2030');
		await page.getByRole('button', { name: 'Previous week' }).click();
		await expect(page.getByTestId('calendar-title')).toHaveText('2–8 Dec 2030');

		// Today brings the current week, its column marked in the palette, not pale yellow.
		await today.click();
		const now = DateTime.now().setZone(facilityTz).toISODate()!;
		const todayHead = page.locator('.ec-header .ec-col-head.ec-today');
		await expect(todayHead).toHaveText(dayHeading(now));
		await expect(today).toBeDisabled();
		const colours = await todayHead.evaluate((el) => {
			const probe = document.createElement('span');
			probe.style.color = 'var(--color-ink-50)';
			document.body.append(probe);
			const ink50 = getComputedStyle(probe).color;
			probe.remove();
			return { background: getComputedStyle(el).backgroundColor, ink50 };
		});
		expect(colours.background).toBe(colours.ink50);
		expect(await pageWidth(page)).toBeLessThanOrEqual(1440);
	});
});
