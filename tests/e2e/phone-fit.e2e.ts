import { expect, test, type Page } from '@playwright/test';
import { open, signIn } from './support';

// Every page each demo role can reach must fit a 390 px wide phone: none may scroll
// sideways. The pages are found as a person finds them, by following the app's own links
// from the dashboard, so a page added later is checked without being listed here. One page
// per route is enough (the second box page is drawn by the same code as the first).

test.use({ viewport: { width: 390, height: 844 }, isMobile: true, hasTouch: true });

const roles = ['admin', 'manager', 'trainer', 'pi', 'member', 'newcomer'] as const;

/** Links that download, leave the app, act or only exist for development. */
const skipped = /^\/(api|ical|uploads|signout|dev)(\/|$)|\.(ics|csv|pdf)$|\/export(\/|$)/;

/** A route's shape: numbers, tokens and months stand for their kind. */
function routeOf(path: string): string {
	return path
		.replace(/\/\d+(?=\/|$)/g, '/:id')
		.replace(/\/\d{4}-\d{2}(?=\/|$)/g, '/:month')
		.replace(/\/[A-Za-z0-9_-]{24,}(?=\/|$)/g, '/:token');
}

async function linksOn(page: Page): Promise<string[]> {
	return page.evaluate(() =>
		[...document.querySelectorAll<HTMLAnchorElement>('a[href]')]
			.filter((a) => a.origin === location.origin && !a.hasAttribute('download'))
			.map((a) => a.pathname)
	);
}

for (const role of roles) {
	test(`every page a ${role} reaches fits a 390 px phone`, async ({ page }) => {
		test.setTimeout(180_000);
		await signIn(page, `${role}@example.org`);
		const seen = new Set<string>(['/']);
		const queue = ['/'];
		const wide: string[] = [];
		const visited: string[] = [];
		while (queue.length && visited.length < 60) {
			const path = queue.shift()!;
			await open(page, path);
			visited.push(path);
			const width = await page.evaluate(() => document.documentElement.scrollWidth);
			if (width > 390) wide.push(`${path}: ${width} px`);
			// Nor may a part of it hide columns in a sideways-scrolling box, except a grid that
			// is a matrix by nature and says so (data-scrolls).
			const hidden = await page.evaluate(() =>
				[...document.querySelectorAll<HTMLElement>('main *')]
					.filter((el) => {
						const x = getComputedStyle(el).overflowX;
						return (
							(x === 'auto' || x === 'scroll') &&
							el.scrollWidth > el.clientWidth + 1 &&
							!el.closest('[data-scrolls]')
						);
					})
					.map((el) => el.tagName.toLowerCase() + (el.className ? `.${el.className}` : ''))
			);
			for (const el of hidden) wide.push(`${path}: scrolls inside ${el}`);
			for (const link of await linksOn(page)) {
				const route = routeOf(link);
				if (skipped.test(link) || seen.has(route)) continue;
				seen.add(route);
				queue.push(link);
			}
		}
		test.info().annotations.push({ type: 'pages', description: visited.join(' ') });
		expect(wide).toEqual([]);
		// The walk reached the role's pages, not only the dashboard.
		expect(visited.length).toBeGreaterThan(role === 'newcomer' ? 5 : 8);
	});
}
