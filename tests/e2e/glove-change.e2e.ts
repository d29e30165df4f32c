import { expect, test, type Page } from '@playwright/test';
import { eq } from 'drizzle-orm';
import { bookings, boxes, outages } from '../../src/lib/server/db/schema';
import { closeTestDb, fitGloves, makeBox, makeUser, testDb } from '../support/db';
import { open, signIn } from './support';

test.afterAll(closeTestDb);
test.use({ viewport: { width: 390, height: 844 }, isMobile: true, hasTouch: true });

/** Nothing on the page is wider than the screen. */
async function fitsTheScreen(page: Page) {
	const width = await page.evaluate(() => document.documentElement.scrollWidth);
	expect(width).toBeLessThanOrEqual(390);
}

test('a manager runs a whole glove change on a phone, from the port to the box back in service', async ({
	page
}) => {
	const boxId = await makeBox({ name: `Phone box ${Date.now().toString(36)}` });
	const [left] = await fitGloves(boxId);
	const member = await makeUser('member');
	const from = new Date(Date.now() + 30 * 60_000);
	const to = new Date(from.getTime() + 3_600_000);
	const [held] = await testDb()
		.insert(bookings)
		.values({
			boxId,
			userId: member.id,
			startAt: from,
			endAt: to,
			blockedUntil: to,
			purpose: 'Grignard',
			status: 'confirmed',
			confirmedAt: new Date()
		})
		.$returningId();
	const manager = await makeUser('manager');

	await signIn(page, manager.email, manager.password);
	await open(page, `/boxes/${boxId}/ports/${left.id}`);
	await fitsTheScreen(page);
	await page.getByRole('link', { name: 'Start glove change' }).click();

	// The preview names the booking before anything is cancelled.
	await expect(
		page.getByRole('heading', { name: /Bookings that will be cancelled \(1\)/ })
	).toBeVisible();
	await expect(page.getByText('Test member')).toBeVisible();
	await fitsTheScreen(page);
	const [before] = await testDb().select().from(bookings).where(eq(bookings.id, held.id));
	expect(before.status).toBe('confirmed');
	await page
		.getByRole('button', { name: /Seal the port and start the change, cancelling 1 booking/ })
		.click();
	await page.waitForURL(/\/manage\/glove-changes\/\d+$/);
	await page.locator('body[data-hydrated="true"]').waitFor();
	await expect(
		page.getByRole('heading', { name: /Bookings the outage cancelled \(1\)/ })
	).toBeVisible();
	await expect(page.getByRole('complementary', { name: 'Caution' })).toBeVisible();
	await fitsTheScreen(page);

	const done = async (label: RegExp) => {
		await expect(page.locator('#now-heading')).toHaveText(label);
		await page.getByRole('button', { name: 'Done', exact: true }).click();
	};
	await done(/Port sealed/);
	// A skip needs a reason, and the reason is kept.
	await expect(page.locator('#now-heading')).toHaveText(/O-rings off/);
	await page.getByText('Skip this step…').click();
	await page.getByRole('button', { name: 'Skip with this reason' }).click();
	await expect(page.locator('#skipReason-error')).toBeVisible();
	await page.getByLabel('Why is it skipped?').fill('Quick-change port: no O-rings to take off');
	await page.getByRole('button', { name: 'Skip with this reason' }).click();
	await expect(page.getByText('Reason: Quick-change port: no O-rings to take off')).toBeVisible();
	await done(/Old glove removed/);

	// The new glove defaults to the port's hand and the old glove's material and size.
	await expect(page.locator('#now-heading')).toHaveText(/New glove fitted/);
	await expect(page.getByLabel('Hand (as made)')).toHaveValue('left');
	await expect(page.getByLabel('Size', { exact: true })).toHaveValue('8');
	await page.getByLabel('Hand (as made)').selectOption('right');
	await expect(page.getByText(/This port is on the left/)).toBeVisible();
	await page.getByLabel('Hand (as made)').selectOption('left');
	await page.getByRole('button', { name: 'Record the new glove as fitted' }).click();

	for (let n = 1; n <= 5; n++) {
		await page.getByRole('button', { name: `Cycle ${n} done` }).click();
		await expect(page.getByText(`${n} cycle${n === 1 ? '' : 's'} so far`)).toBeVisible();
	}
	await expect(
		page.getByRole('listitem').filter({ hasText: '5 cycles (done so far)' })
	).toBeVisible();
	await page.getByRole('button', { name: 'Flushing done: O-rings back on' }).click();
	await done(/Purge started/);
	await done(/Port cover removed/);
	await fitsTheScreen(page);

	await page.getByRole('button', { name: 'Complete the glove change' }).click();
	await expect(page.getByText(/✓ Completed/)).toBeVisible();

	const [box] = await testDb().select().from(boxes).where(eq(boxes.id, boxId));
	const [outage] = await testDb().select().from(outages).where(eq(outages.boxId, box.id));
	expect(outage.endAt.getTime()).toBeLessThanOrEqual(Date.now() + 1000);
	const [after] = await testDb().select().from(bookings).where(eq(bookings.id, held.id));
	expect(after).toMatchObject({ status: 'cancelled', outageId: outage.id });
});
