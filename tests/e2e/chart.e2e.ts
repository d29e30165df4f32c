import { expect, test, type Page } from '@playwright/test';
import { DateTime } from 'luxon';
import { closeTestDb, makeBox, makeUser } from '../support/db';
import { open, signIn } from './support';

test.afterAll(closeTestDb);

const tz = process.env.FACILITY_TZ ?? 'Europe/Berlin';

/**
 * A box of its own with twelve readings of 0.3–0.7 ppm over the last hours, entered through
 * the API as a manager; the newest is O₂ 0.55, H₂O 0.62 ppm. Returns the box and that time.
 */
async function boxWithReadings(page: Page) {
	const boxId = await makeBox({ name: `Chart box ${Date.now().toString(36)}` });
	const manager = await makeUser('manager');
	await signIn(page, manager.email, manager.password);
	// Whole minutes plus 17 s, ending ten minutes ago: in the past for the server's clock.
	const newest = Math.floor(Date.now() / 60_000) * 60_000 - 10 * 60_000 + 17_000;
	for (let i = 11; i >= 0; i--) {
		const last = i === 0;
		const r = await page.request.post(`/api/boxes/${boxId}/readings`, {
			data: {
				at: new Date(newest - i * 20 * 60_000).toISOString(),
				o2Ppm: last ? 0.55 : 0.3 + (i % 5) / 10,
				h2oPpm: last ? 0.62 : 0.7 - (i % 4) / 10
			}
		});
		expect(r.status()).toBe(201);
	}
	return { boxId, newest };
}

test('the chart scales to readings of 0.3–0.7 ppm, shows the latest on a 24-hour clock and exports CSV', async ({
	page
}) => {
	const { boxId, newest } = await boxWithReadings(page);
	await open(page, `/boxes/${boxId}`);
	const chart = page.getByTestId('atmosphere-chart');
	await expect(chart).toHaveAttribute('data-status', 'ready');
	await expect(chart.locator('canvas')).toHaveCount(2);

	// The y-axis follows the data instead of a fixed 0–10 ppm: the top is above the highest
	// reading and well under the alarm level.
	for (const gas of ['o2', 'h2o']) {
		const max = Number(await chart.getAttribute(`data-${gas}-max`));
		expect(max, gas).toBeGreaterThanOrEqual(0.7);
		expect(max, gas).toBeLessThan(2);
		expect(Number(await chart.getAttribute(`data-${gas}-min`)), gas).toBeGreaterThanOrEqual(0);
	}
	// The warn and alarm levels are named beside the chart.
	for (const name of ['O₂ warn', 'O₂ alarm', 'H₂O warn', 'H₂O alarm'])
		await expect(chart.getByText(name, { exact: true })).toBeVisible();

	// Idle, the legend gives the newest reading and its time on the facility's 24-hour clock.
	const legend = page.getByTestId('chart-legend');
	const hhmm = DateTime.fromMillis(newest, { zone: tz }).toFormat('HH:mm');
	await expect(legend).toContainText('Latest');
	await expect(legend).toContainText(hhmm);
	await expect(legend).toContainText('O₂ 0.55 ppm');
	await expect(legend).toContainText('H₂O 0.62 ppm');
	await expect(legend).not.toContainText('--');
	await expect(legend).not.toContainText(/\b[AP]M\b/);

	// Under the cursor it gives that point, still on the 24-hour clock.
	const over = (await chart.locator('.u-over').first().boundingBox())!;
	await page.mouse.move(over.x + over.width - 4, over.y + over.height / 2);
	await expect(legend).not.toContainText('Latest');
	await expect(legend).toContainText(/\d{2}:\d{2}/);
	await expect(legend).not.toContainText(/\b[AP]M\b/);

	// Asking for 24 hours keeps the axis on the data.
	await page.getByRole('button', { name: '24 hours' }).click();
	await expect(page.getByRole('button', { name: '24 hours' })).toHaveAttribute(
		'aria-pressed',
		'true'
	);
	await expect(chart).toHaveAttribute('data-status', 'ready');
	expect(Number(await chart.getAttribute('data-o2-max'))).toBeLessThan(2);

	// The export link answers the shown range as CSV.
	const href = await page.getByRole('link', { name: 'Export CSV' }).getAttribute('href');
	const csv = await page.request.get(href!);
	expect(csv.status()).toBe(200);
	expect(csv.headers()['content-type']).toMatch(/^text\/csv/);
	expect(csv.headers()['content-disposition']).toMatch(/^attachment; filename=".+\.csv"$/);
	const lines = (await csv.text()).trim().split(/\r\n/);
	expect(lines[0]).toBe('time,o2_ppm,h2o_ppm,source,note');
	expect(lines).toHaveLength(13);
	expect(lines[12]).toBe(
		`${DateTime.fromMillis(newest, { zone: tz }).toISO({ suppressMilliseconds: true })},0.55,0.62,manual,`
	);
	await expect(page.getByRole('link', { name: 'All readings' }).first()).toHaveAttribute(
		'href',
		`/boxes/${boxId}/readings`
	);
});

test.describe('on a phone', () => {
	test.use({ viewport: { width: 390, height: 844 }, isMobile: true, hasTouch: true });

	test('the chart fits the screen and switches to a log scale', async ({ page }) => {
		const { boxId } = await boxWithReadings(page);
		await open(page, `/boxes/${boxId}`);
		const chart = page.getByTestId('atmosphere-chart');
		await expect(chart).toHaveAttribute('data-status', 'ready');
		expect(await page.evaluate(() => document.documentElement.scrollWidth)).toBeLessThanOrEqual(
			390
		);
		await page.getByLabel('Log scale').check();
		await expect(chart).toHaveAttribute('data-log', 'true');
		// Whole decades around the data and both levels (warn 1, alarm 10 ppm by default).
		expect(Number(await chart.getAttribute('data-o2-min'))).toBe(0.1);
		expect(Number(await chart.getAttribute('data-o2-max'))).toBe(100);
		expect(await page.evaluate(() => document.documentElement.scrollWidth)).toBeLessThanOrEqual(
			390
		);
	});
});
