import { defineConfig } from '@playwright/test';

// Runs against the built app that `npm test` starts (APP_URL), in Debian's Chromium.
export default defineConfig({
	testDir: 'tests/e2e',
	testMatch: '**/*.e2e.ts',
	workers: 1,
	retries: 0,
	timeout: 30_000,
	reporter: [['list'], ['json']],
	outputDir: '.data/test-results/playwright',
	use: {
		baseURL: process.env.APP_URL ?? 'http://127.0.0.1:3100',
		trace: 'retain-on-failure',
		launchOptions: {
			executablePath: process.env.CHROMIUM_PATH ?? '/usr/bin/chromium',
			args: [
				'--headless',
				'--no-sandbox',
				'--disable-gpu',
				'--disable-quic',
				'--no-first-run',
				'--disable-background-networking',
				'--disable-component-update',
				'--disable-sync'
			]
		}
	}
});
