import { expect, test } from '@playwright/test';
import { open, signIn } from './support';

test('a manager imports a sensor log with a report, records a reading and sees the chart', async ({
	page
}) => {
	await signIn(page, 'manager@example.org');
	await open(page, '/boxes');
	await page.getByRole('link', { name: /Heron/ }).first().click();
	await page.locator('body[data-hydrated="true"]').waitFor();
	await expect(page.getByRole('heading', { name: 'Atmosphere', exact: true })).toBeVisible();
	// uPlot draws on a canvas (one per gas) once the week's readings are in.
	await expect(page.getByTestId('atmosphere-chart').locator('canvas').first()).toBeVisible();
	// The warn and alarm levels are drawn as their own lines, named in the legend.
	const chart = page.getByTestId('atmosphere-chart');
	for (const name of ['O₂ warn', 'O₂ alarm', 'H₂O warn', 'H₂O alarm'])
		await expect(chart.getByText(name, { exact: true })).toBeVisible();
	// Asking for 30 days asks the server for 30 days.
	const thirty = page.waitForResponse((r) => {
		const from = new URL(r.url()).searchParams.get('from');
		return (
			r.url().includes('/readings?') && !!from && Date.now() - Date.parse(from) > 29 * 86_400_000
		);
	});
	await page.getByRole('button', { name: '30 days' }).click();
	expect((await thirty).status()).toBe(200);
	await expect(page.getByRole('button', { name: '30 days' })).toHaveAttribute(
		'aria-pressed',
		'true'
	);

	// Twenty readings a minute apart, at odd seconds so they meet none of the demo's, one bad.
	const end = Math.floor(Date.now() / 60_000) * 60_000 - 2 * 3_600_000 + 17_000;
	const lines = ['time,O2 ppm,H2O ppm'];
	for (let i = 0; i < 20; i++) {
		const at = new Date(end - (19 - i) * 60_000).toISOString();
		lines.push(i === 1 ? `${at},-3,0.4` : `${at},0.4${i % 10},0.3`);
	}
	const file = {
		name: 'heron-log.csv',
		mimeType: 'text/csv',
		buffer: Buffer.from(lines.join('\n'))
	};
	await page.getByLabel('Sensor log (CSV: time, O2 ppm, H2O ppm)').setInputFiles(file);
	// The preview lists the rejected row and stores nothing while it stands.
	const preview = page.getByTestId('import-preview');
	await expect(preview.getByTestId('preview-count')).toHaveText(
		'20 rows: 19 new readings, 0 already stored or repeated, 1 rejected'
	);
	await expect(
		preview.getByRole('row', { name: /3 column "O2 ppm" holds "-3": O₂ cannot be negative/ })
	).toBeVisible();
	await expect(page.getByRole('button', { name: 'Import 19 readings' })).toBeDisabled();

	await page.getByLabel('Import the good rows even if some are rejected').check();
	await page.getByRole('button', { name: 'Import 19 readings' }).click();
	const report = page.getByTestId('import-report');
	await expect(report).toContainText('Imported.');
	await expect(report).toContainText('19 rows accepted, 0 skipped as duplicates, 1 rejected');

	// The same file again adds nothing.
	await page.getByRole('button', { name: 'Check the file' }).click();
	await expect(preview.getByTestId('preview-count')).toContainText(
		'0 new readings, 19 already stored or repeated'
	);
	await expect(page.getByRole('button', { name: 'Import 0 readings' })).toBeDisabled();

	await page.getByLabel('O₂ (ppm)').fill('0.6');
	await page.getByLabel('H₂O (ppm)').fill('-1');
	await page.getByRole('button', { name: 'Record reading' }).click();
	await expect(page.getByText('H₂O cannot be negative.')).toBeVisible();
	await page.getByLabel('H₂O (ppm)').fill('0.4');
	await page.getByRole('button', { name: 'Record reading' }).click();
	await expect(page.getByText('Reading recorded.')).toBeVisible();
});

test('the calculations page works out a frost point and a leak class', async ({ page }) => {
	await signIn(page, 'member@example.org');
	await open(page, '/calc');
	await expect(page.getByLabel('Caution').first()).toBeVisible();
	const humidity = page.getByRole('region', { name: 'Frost point ↔ water (ppmv)' });
	await humidity.getByLabel('Frost point (°C)').fill('-60');
	// Murphy & Koop (2005): −60 °C frost point is 10.676 ppmv at 1 atm (REFERENCES.md), shown to 3 figures.
	await expect(humidity).toContainText('10.7 ppmv');
	await humidity.getByLabel('Frost point (°C)').fill('-130');
	await expect(humidity.locator('.field-error')).toBeVisible();

	const leak = page.getByRole('region', { name: 'Leak test: hourly leak rate' });
	await leak.getByText('Oxygen rise').click();
	await leak.getByLabel('O₂ rise (ppm)').fill('200');
	await leak.getByLabel('Test duration (min)').fill('60');
	await expect(leak).toContainText('class 2');
});
