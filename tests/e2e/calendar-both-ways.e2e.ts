import { expect, test, type Page } from '@playwright/test';
import { slot } from '../support/time';
import { open, signIn } from './support';

/** A booking of the signed-in person on Kestrel, made through the API the calendar uses. */
async function bookKestrel(page: Page, times: { start: string; end: string }, purpose: string) {
	const boxes = await page.request.get('/api/boxes');
	const { boxes: list } = (await boxes.json()) as { boxes: { id: number; name: string }[] };
	const boxId = list.find((b) => b.name === 'Kestrel')!.id;
	const made = await page.request.post('/api/bookings', {
		data: { boxId, ...times, purpose }
	});
	expect(made.status()).toBe(201);
	const { booking } = (await made.json()) as { booking: { id: number } };
	return { boxId, bookingId: booking.id };
}

test('a member opens their booking on the week view, moves it, then cancels it', async ({
	page
}) => {
	await signIn(page, 'member@example.org');
	const purpose = `Both ways ${Date.now().toString(36)}`;
	// Next week, before the demo's day starts at 09:00 and clear of the 06:00 test slot.
	const times = slot(7, 4, 60);
	const { boxId, bookingId } = await bookKestrel(page, times, purpose);

	await open(page, `/calendar?view=week&box=${boxId}&date=${times.start.slice(0, 10)}`);
	const event = page.locator('.ec-event', { hasText: purpose });
	await event.click();

	const details = page.getByTestId('booking-details');
	await expect(details.getByRole('heading', { name: 'Your booking' })).toBeFocused();
	await expect(details).toContainText(purpose);
	await expect(details).toContainText('04:00–05:00');

	await details.getByRole('button', { name: 'Edit' }).click();
	await details.getByLabel('Start', { exact: true }).fill('05:00');
	await details.getByLabel('End', { exact: true }).fill('06:00');
	await details.getByRole('button', { name: 'Save changes' }).click();
	await expect(page.getByRole('status')).toContainText('Saved');
	await expect(page.getByRole('status')).toContainText('05:00–06:00');
	await expect(details).toContainText('05:00–06:00');
	await expect(event).toContainText('05:00');

	await details.getByRole('button', { name: 'Cancel booking' }).click();
	const dialog = page.getByRole('dialog', { name: 'Cancel your booking?' });
	await expect(dialog).toBeVisible();
	// A week ahead is well before the box's late-cancellation window.
	await expect(dialog).toContainText('will not be billed');
	await dialog.getByRole('button', { name: 'Yes, cancel it' }).click();
	await expect(page.getByRole('status')).toContainText('Booking cancelled');
	await expect(event).toHaveCount(0);

	const after = await page.request.get(`/api/bookings/${bookingId}`);
	expect(((await after.json()) as { booking: { status: string } }).booking.status).toBe(
		'cancelled'
	);
});

test('every event opens from the keyboard, in the list view too', async ({ page }) => {
	await signIn(page, 'member@example.org');
	const purpose = `Keyboard ${Date.now().toString(36)}`;
	const times = slot(8, 5, 60);
	const { boxId, bookingId } = await bookKestrel(page, times, purpose);

	await open(page, `/calendar?view=list&box=${boxId}&date=${times.start.slice(0, 10)}`);
	const event = page.locator('.ec-event', { hasText: purpose });
	await event.focus();
	await page.keyboard.press('Enter');
	const details = page.getByTestId('booking-details');
	await expect(details.getByRole('heading', { name: 'Your booking' })).toBeFocused();
	await details.getByRole('button', { name: 'Close details' }).click();
	await expect(page.getByRole('heading', { name: 'Book time' })).toBeVisible();

	// Tidy up: the booking goes, so the demo week stays as it was.
	expect((await page.request.delete(`/api/bookings/${bookingId}`)).status()).toBe(200);
});
