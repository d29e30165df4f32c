import { expect, test, type Page } from '@playwright/test';
import { DateTime } from 'luxon';
import { facilityTz } from '../support/time';
import { open, signIn } from './support';

// A European sensor export as it comes: semicolons, decimal commas and a German header. The
// page shows what it understood before anything is saved; a second click imports.

/**
 * Five readings a second apart, `daysAgo` days before now on the facility's clock: a
 * rerun (which starts more than five seconds later) and the other width (another day) never
 * meet these seconds again, and nothing is in the future. Kept off the small hours, where
 * a clock change could skip or repeat a time.
 */
function sensorLog(daysAgo: number) {
	let first = DateTime.now().setZone(facilityTz).startOf('second').minus({ days: daysAgo });
	if (first.hour < 4) first = first.minus({ hours: 5 });
	const rows = [0, 1, 2, 3, 4].map((i) => ({
		at: first.plus({ seconds: i }),
		o2: `0,${41 + i}`,
		h2o: `0,${27 + i}`
	}));
	const text = [
		'Zeit;O2 (ppm);H2O (ppm)',
		...rows.map((r) => `${r.at.toFormat('dd.MM.yyyy HH:mm:ss')};${r.o2};${r.h2o}`),
		''
	].join('\r\n');
	return { rows, text };
}

async function importOnBoxPage(page: Page, daysAgo: number) {
	await signIn(page, 'manager@example.org');
	await open(page, '/boxes');
	await page.getByRole('link', { name: /Heron/ }).first().click();
	await page.waitForURL(/\/boxes\/\d+$/);
	await page.locator('body[data-hydrated="true"]').waitFor();
	const boxId = Number(new URL(page.url()).pathname.split('/')[2]);
	expect(boxId).toBeGreaterThan(0);

	const { rows, text } = sensorLog(daysAgo);
	await page.getByLabel('Sensor log (CSV: time, O2 ppm, H2O ppm)').setInputFiles({
		name: 'sensor-export.csv',
		mimeType: 'text/csv',
		buffer: Buffer.from(text)
	});

	// The preview: the file's own header words, the separator, the decimal mark, the date
	// format, the zone, the count and the first rows on the facility's 24-hour clock.
	const preview = page.getByTestId('import-preview');
	await expect(preview).toBeVisible();
	await expect(preview.getByTestId('preview-columns')).toHaveText(
		'time: “Zeit”, O₂: “O2 (ppm)”, H₂O: “H2O (ppm)”'
	);
	await expect(preview).toContainText('semicolon (;)');
	await expect(preview).toContainText('comma (0,45)');
	await expect(preview).toContainText('dd.mm.yyyy hh:mm[:ss]');
	await expect(preview).toContainText(facilityTz);
	await expect(preview.getByTestId('preview-count')).toHaveText(
		'5 rows: 5 new readings, 0 already stored or repeated, 0 rejected'
	);
	const shown = rows[0].at.setLocale('en-GB').toFormat('ccc d LLL yyyy, HH:mm:ss');
	const firstRow = preview.getByRole('row').filter({ hasText: shown });
	await expect(firstRow).toContainText(rows[0].at.toFormat('dd.MM.yyyy HH:mm:ss'));
	await expect(firstRow).toContainText('0.41');
	await expect(preview.getByRole('row').filter({ hasText: '0.45' })).toBeVisible();
	expect(await page.evaluate(() => document.documentElement.scrollWidth)).toBeLessThanOrEqual(
		page.viewportSize()!.width
	);

	// Nothing is stored until the second click (earlier runs left readings at other seconds).
	const seconds = new Set(rows.map((r) => r.at.toSeconds()));
	const range = new URLSearchParams({
		from: rows[0].at.toISO()!,
		to: rows[4].at.plus({ seconds: 1 }).toISO()!
	});
	const stored = async () => {
		const response = await page.request.get(`/api/boxes/${boxId}/readings?${range}`);
		expect(response.status()).toBe(200);
		const series = (await response.json()) as { t: number[]; o2: number[] };
		return series.t.flatMap((t, i) => (seconds.has(t) ? [[t, series.o2[i]]] : []));
	};
	expect(await stored()).toEqual([]);

	await page.getByRole('button', { name: 'Import 5 readings' }).click();
	const report = page.getByTestId('import-report');
	await expect(report).toContainText('Imported.');
	await expect(report).toContainText('5 rows accepted, 0 skipped as duplicates, 0 rejected');
	await expect(page.getByTestId('import-preview')).toHaveCount(0);
	expect(await page.evaluate(() => document.documentElement.scrollWidth)).toBeLessThanOrEqual(
		page.viewportSize()!.width
	);

	// Stored at the instants the file's wall-clock times name, with the decimal commas read.
	expect(await stored()).toEqual(
		rows.map((r) => [r.at.toSeconds(), Number(r.o2.replace(',', '.'))])
	);
}

test.describe('at a desk', () => {
	test.use({ viewport: { width: 1440, height: 900 } });
	test('a semicolon, decimal-comma log with a German header imports after its preview', async ({
		page
	}) => {
		await importOnBoxPage(page, 3);
	});
});

test.describe('on a phone', () => {
	test.use({ viewport: { width: 390, height: 844 }, isMobile: true, hasTouch: true });
	test('a semicolon, decimal-comma log with a German header imports after its preview', async ({
		page
	}) => {
		await importOnBoxPage(page, 4);
	});
});
