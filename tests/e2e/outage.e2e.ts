import { expect, test } from '@playwright/test';
import { DateTime } from 'luxon';
import { sunkMail } from '../support/mail';
import { DEMO_PASSWORD, open, signIn } from './support';

const tz = process.env.FACILITY_TZ ?? 'Europe/Berlin';

test('a manager takes a box out of service; the member sees the cancellation and the e-mail', async ({
	page,
	request
}) => {
	// The member books Tern early in the morning nine days ahead.
	const day = DateTime.now().setZone(tz).startOf('day').plus({ days: 9 });
	const start = day.set({ hour: 5 });
	await request.post('/api/session', {
		data: { email: 'member@example.org', password: DEMO_PASSWORD }
	});
	const boxes = await (await request.get('/api/boxes')).json();
	const tern = boxes.boxes.find((b: { name: string }) => b.name === 'Tern');
	const purpose = `Inventory ${Date.now().toString(36)}`;
	const made = await request.post('/api/bookings', {
		data: { boxId: tern.id, start: start.toISO(), end: start.plus({ hours: 1 }).toISO(), purpose }
	});
	expect(made.status()).toBe(201);
	const { booking } = await made.json();

	await signIn(page, 'manager@example.org');
	await open(page, `/boxes/${tern.id}`);
	await page.getByText('Take the box out of service').click();
	await page.getByLabel('Start date').fill(day.toISODate()!);
	await page.getByLabel('Start time').fill('04:30');
	await page.getByLabel('Expected end date').fill(day.toISODate()!);
	await page.getByLabel('Expected end time').fill('07:30');
	await page.getByLabel('Kind').selectOption({ label: 'Purifier regeneration' });
	await page
		.getByLabel('Reason (sent to everyone affected)')
		.fill('Purifier regeneration, planned');
	await page.getByRole('button', { name: 'Take out of service' }).click();
	// It says whose booking it cancels before it does.
	await page.getByRole('button', { name: 'Yes, take it out of service' }).click();
	await expect(page.getByRole('status')).toContainText('1 booking was cancelled');
	await page.getByRole('button', { name: 'Sign out' }).click();

	await signIn(page, 'member@example.org');
	const nav = page.getByRole('navigation', { name: 'Main' });
	await expect(nav.getByRole('link', { name: /Notifications/ })).toContainText(/\d/);
	await nav.getByRole('link', { name: /Notifications/ }).click();
	await expect(page.getByText(/Cancelled: Tern/).first()).toBeVisible();
	await expect(page.getByText('Reason: Purifier regeneration, planned').first()).toBeVisible();

	// The e-mail reaches the local sink with the booking's calendar cancellation.
	await expect
		.poll(
			() =>
				sunkMail().some(
					(m) =>
						m.to === 'member@example.org' &&
						m.subject.startsWith('Cancelled: Tern') &&
						m.raw.includes(`booking-${booking.id}@boxwright`)
				),
			{ timeout: 20_000 }
		)
		.toBe(true);
});
