import { expect, test } from '@playwright/test';
import { dragSlot, open, signIn } from './support';

test('a member selects a slot on the week view and sees it booked', async ({ page }) => {
	await signIn(page, 'member@example.org');
	await open(page, '/calendar?view=week');
	await expect(page.getByRole('heading', { name: 'Calendar' })).toBeVisible();
	await page
		.getByRole('combobox', { name: 'Box', exact: true })
		.first()
		.selectOption({ label: 'Kestrel' });
	const purpose = `Ligand weighing ${Date.now().toString(36)}`;

	// Next week's Wednesday, early morning: the demo never books before 09:00.
	await page.getByRole('button', { name: 'Next week' }).click();
	await dragSlot(page, 'wed', 6, 7);
	await expect(page.getByLabel('Start', { exact: true })).toHaveValue('06:00');
	await expect(page.getByLabel('End', { exact: true })).toHaveValue('07:00');

	await page.getByLabel('Purpose').fill(purpose);
	await page.getByRole('button', { name: 'Book', exact: true }).click();
	await expect(page.getByRole('status')).toContainText('Booked');
	await expect(page.locator('.ec-event.bw-mine', { hasText: purpose })).toBeVisible();

	await open(page, '/bookings');
	await expect(page.getByRole('row', { name: new RegExp(purpose) })).toContainText('06:00–07:00');
});

test('a newcomer tries to book and sees why not', async ({ page }) => {
	await signIn(page, 'newcomer@example.org');
	await open(page, '/calendar?view=week');
	await page
		.getByRole('combobox', { name: 'Box', exact: true })
		.first()
		.selectOption({ label: 'Heron' });
	await page.getByRole('button', { name: 'Next week' }).click();
	await dragSlot(page, 'thu', 6, 7);
	await page.getByLabel('Purpose').fill('First go');
	await page.getByRole('button', { name: 'Book', exact: true }).click();
	const alert = page.getByRole('alert');
	await expect(alert).toContainText('breaks the box’s rules');
	await expect(alert.locator('[data-code=certification_missing]').first()).toContainText(
		'General glove box use'
	);
	await expect(page.locator('.ec-event.bw-mine')).toHaveCount(0);
});
