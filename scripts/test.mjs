// `npm test`: the set-up of `npm start` on a fresh `boxwright_test` database, then
// svelte-check and lint (Prettier + ESLint), vitest (unit + integration) and Playwright
// against the built app.
import { spawn } from 'node:child_process';
import { existsSync, mkdirSync, readFileSync, rmSync } from 'node:fs';
import { join } from 'node:path';
import {
	dataDir,
	ensureBuild,
	ensureDatabase,
	ensureDebianPackage,
	ensureDependencies,
	loadEnvFile,
	log,
	migrate,
	root,
	run,
	seed,
	startMailSink,
	waitForHttp
} from './lib/setup.mjs';

// `npm test -- <files>` runs only those: *.e2e.ts in Playwright, the rest in vitest.
const filters = process.argv.slice(2);
const e2eFilters = filters.filter((f) => f.endsWith('.e2e.ts'));
const vitestFilters = filters.filter((f) => !f.endsWith('.e2e.ts'));
const runVitest = !filters.length || vitestFilters.length > 0;
const runPlaywright = !filters.length || e2eFilters.length > 0;

loadEnvFile();
ensureDependencies();
const db = await ensureDatabase({ database: 'boxwright_test', fresh: true });
const chromium = ensureDebianPackage('chromium', 'chromium', 'The browser tests');
migrate(db.url);
seed(db.url);

const results = join(dataDir(), 'test-results');
rmSync(results, { recursive: true, force: true });
mkdirSync(results, { recursive: true });

const failures = [];
if (!filters.length) {
	if (run('npm', ['run', '-s', 'check']) !== 0) failures.push('svelte-check');
	if (run('npm', ['run', '-s', 'lint']) !== 0) failures.push('lint');
}
ensureBuild();

rmSync(join(dataDir(), 'test-mail'), { recursive: true, force: true });
const sink = await startMailSink(Number(process.env.TEST_SMTP_PORT ?? 2526), 'test-mail');
const port = process.env.TEST_PORT ?? '3100';
const baseUrl = `http://127.0.0.1:${port}`;
const env = {
	...process.env,
	...sink.env,
	// Quick retries, so a test of a mail outage finishes in seconds.
	OUTBOX_BACKOFF_MS: '200',
	OUTBOX_POLL_MS: '200',
	SCHEDULER_POLL_MS: '300',
	// Readiness: a scheduler round may take longer than 5 × 300 ms on a busy test machine.
	READY_SCHEDULER_LATE_MS: '30000',
	// Request lines stay out of the test output; warnings and errors still show.
	LOG_LEVEL: process.env.LOG_LEVEL ?? 'warn',
	// The scraper's token (tests/integration/metrics.test.ts reads it from here too).
	METRICS_TOKEN: 'test-metrics-token-0123456789',
	// X-Statements on every answer (tests/integration/dashboard-queries.test.ts).
	COUNT_STATEMENTS: '1',
	DATABASE_URL: db.url,
	// Above the largest upload (a 25 MB sensor log); body-limits.test.ts counts on the 64 kB default.
	BODY_SIZE_LIMIT: process.env.BODY_SIZE_LIMIT ?? '26M',
	BODY_LIMIT_DEFAULT: '64K',
	PORT: port,
	ORIGIN: baseUrl,
	APP_URL: baseUrl,
	FACILITY_TZ: process.env.FACILITY_TZ ?? 'Europe/Berlin',
	CHROMIUM_PATH: chromium,
	PLAYWRIGHT_SKIP_BROWSER_DOWNLOAD: '1'
};
const server = spawn('node', ['build'], {
	cwd: root,
	stdio: ['ignore', 'inherit', 'inherit'],
	env
});
let code;
try {
	await waitForHttp(`${baseUrl}/api/health`, 60, server);
	const vitestJson = join(results, 'vitest.json');
	if (
		runVitest &&
		run(
			'npx',
			[
				'vitest',
				'run',
				'--reporter=default',
				'--reporter=json',
				`--outputFile.json=${vitestJson}`,
				...vitestFilters
			],
			{ env }
		) !== 0
	)
		failures.push('vitest');
	const playwrightJson = join(results, 'playwright.json');
	if (
		runPlaywright &&
		run('npx', ['playwright', 'test', ...e2eFilters], {
			env: { ...env, PLAYWRIGHT_JSON_OUTPUT_NAME: playwrightJson }
		}) !== 0
	)
		failures.push('playwright');

	const counts = { passed: 0, failed: 0, skipped: 0 };
	if (existsSync(vitestJson)) {
		const v = JSON.parse(readFileSync(vitestJson, 'utf8'));
		counts.passed += v.numPassedTests;
		counts.failed += v.numFailedTests;
		counts.skipped += v.numPendingTests + v.numTodoTests;
	}
	if (existsSync(playwrightJson)) {
		const p = JSON.parse(readFileSync(playwrightJson, 'utf8')).stats;
		counts.passed += p.expected + p.flaky;
		counts.failed += p.unexpected;
		counts.skipped += p.skipped;
	}
	if (counts.failed === 0 && failures.length) counts.failed = failures.length;
	if (failures.length) log(`failed: ${failures.join(', ')}`);
	console.log(`\n${counts.passed} passed, ${counts.failed} failed, ${counts.skipped} skipped`);
	code = failures.length || counts.failed || counts.passed === 0 ? 1 : 0;
} finally {
	server.kill('SIGTERM');
	await new Promise((done) => (server.exitCode !== null ? done() : server.once('exit', done)));
	await sink.stop();
	await db.stop();
}
process.exit(code);
