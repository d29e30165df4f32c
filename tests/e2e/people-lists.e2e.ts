import { randomBytes } from 'node:crypto';
import { expect, test, type Page } from '@playwright/test';
import { users } from '../../src/lib/server/db/schema';
import { closeTestDb, makeUser, testDb, uniqueEmail } from '../support/db';
import { open, signIn } from './support';

test.afterAll(closeTestDb);

/** People of this test only, found by a tag in their names; active unless said otherwise. */
async function people(names: string[], suspended: string[] = []) {
	const tag = `pl${randomBytes(3).toString('hex')}`;
	for (const name of [...names, ...suspended])
		await testDb()
			.insert(users)
			.values({
				email: uniqueEmail(`${tag}-${name.toLowerCase()}`),
				name: `${name} ${tag}`,
				passwordHash: 'not-a-hash',
				status: suspended.includes(name) ? 'suspended' : 'active'
			});
	return tag;
}

async function fitsThePhone(page: Page) {
	expect(await page.evaluate(() => document.documentElement.scrollWidth)).toBeLessThanOrEqual(390);
}

test.describe('at a desk', () => {
	test.use({ viewport: { width: 1440, height: 900 } });

	test('the list of people: searched, filtered and sorted by the address, kept on reload', async ({
		page
	}) => {
		const tag = await people(['Alma', 'Bruno', 'Carla'], ['Dora']);
		const admin = await makeUser('admin');
		await signIn(page, admin.email, admin.password);
		await open(page, '/admin/users');

		await page.getByLabel('Name or e-mail').fill(tag);
		await page.locator('select[name="status"]').selectOption('active');
		await page.getByRole('button', { name: 'Show' }).click();
		await expect(page).toHaveURL(new RegExp(`q=${tag}.*status=active`));
		await expect(page.getByRole('navigation', { name: /pages/ })).toContainText('3 in all');

		await page.getByRole('link', { name: /^Person/ }).click();
		await expect(page).toHaveURL(/sort=name&dir=desc/);

		await page.reload();
		await page.locator('body[data-hydrated="true"]').waitFor();
		await expect(page.getByRole('columnheader', { name: /Person/ })).toHaveAttribute(
			'aria-sort',
			'descending'
		);
		await expect(page.getByLabel('Name or e-mail')).toHaveValue(tag);
		await expect(page.locator('select[name="status"]')).toHaveValue('active');
		const rows = page.getByRole('row');
		await expect(rows).toHaveCount(4);
		await expect(rows.nth(1)).toContainText(`Carla ${tag}`);
		await expect(rows.nth(3)).toContainText(`Alma ${tag}`);
	});
});

test.describe('on a phone', () => {
	test.use({ viewport: { width: 390, height: 844 }, isMobile: true, hasTouch: true });

	test('a person’s card keeps its account actions in sight', async ({ page }) => {
		const tag = await people(['Elio']);
		const admin = await makeUser('admin');
		await signIn(page, admin.email, admin.password);
		await open(page, `/admin/users?q=${tag}`);
		await fitsThePhone(page);
		const deactivate = page.getByRole('button', { name: `Deactivate Elio ${tag}` });
		await expect(deactivate).toBeVisible();
		const box = (await deactivate.boundingBox())!;
		expect(box.x + box.width).toBeLessThanOrEqual(390);
		await expect(page.getByRole('button', { name: 'Save role' })).toBeVisible();
	});

	test('groups, statements, certifications, reports, notices and the dashboard fit a phone', async ({
		page
	}) => {
		const manager = await makeUser('manager');
		await signIn(page, manager.email, manager.password);
		for (const path of [
			'/',
			'/groups',
			'/groups/1?period=all&sort=who',
			'/manage/statements',
			'/manage/training?holds=expired',
			'/reports?weeks=12&gloves.sort=state',
			'/notifications?show=unread',
			'/admin/audit'
		]) {
			await open(page, path);
			await fitsThePhone(page);
		}
	});
});
