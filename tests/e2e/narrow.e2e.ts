import { expect, test } from '@playwright/test';
import { open, signIn } from './support';

test.use({ viewport: { width: 390, height: 844 }, isMobile: true, hasTouch: true });

// Pages a manager reaches from the phone at the box: none may scroll sideways.
const pages = [
	'/',
	'/boxes',
	'/boxes/1',
	'/boxes/1/maintenance',
	'/boxes/1/leak-tests',
	'/bookings',
	'/manage/approvals',
	'/manage/gloves',
	'/manage/training',
	'/groups',
	'/notifications',
	'/account'
];

test('a manager’s pages fit a 390 px wide phone', async ({ page }) => {
	await signIn(page, 'manager@example.org');
	const wide: string[] = [];
	for (const path of pages) {
		await open(page, path);
		const width = await page.evaluate(() => document.documentElement.scrollWidth);
		if (width > 390) wide.push(`${path}: ${width} px`);
	}
	expect(wide).toEqual([]);
});
