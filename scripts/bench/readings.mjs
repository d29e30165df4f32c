// `npm run bench:readings`: a year of one-minute readings for one box (525,600 rows, one
// spike), charted by the bucketed query the app uses (db/reading-series.ts: per-bucket
// lowest and highest, grouped in MariaDB) against a plain range read of the same rows into
// this process, the way a chart without buckets would have to fetch them; then the same
// year as the CSV export writes it, page by page. Rounds alternate between the sides;
// medians and the ratio are printed. On its own database (boxwright_bench_readings), with
// no app server, so it disturbs neither a running dev server nor the other benches.
import mysql from 'mysql2/promise';
import { tsImport } from 'tsx/esm/api';
import { ensureDatabase, ensureDependencies, loadEnvFile, log, migrate } from '../lib/setup.mjs';

const RUNS = Number(process.env.BENCH_RUNS ?? 7);
const ROWS = 525_600;
const tz = process.env.FACILITY_TZ ?? 'Europe/Berlin';
loadEnvFile();
ensureDependencies();
const database = await ensureDatabase({ database: 'boxwright_bench_readings', fresh: true });
migrate(database.url);

// The app's own modules, through tsx: the query timed is the one the chart runs.
const load = (path) => tsImport(path, import.meta.url);
const { connect } = await load('../../src/lib/server/db/connect.ts');
const { readingSeries, readingsPage } = await load('../../src/lib/server/db/reading-series.ts');
const { readingCsvLine, zoneStamper } = await load('../../src/lib/domain/readings-export.ts');
const { MAX_POINTS } = await load('../../src/lib/domain/readings-chart.ts');

const app = connect(database.url, 2);
const sql = await mysql.createConnection({ uri: database.url, timezone: 'Z' });
const median = (xs) => [...xs].sort((a, b) => a - b)[Math.floor(xs.length / 2)];
const ms = (x) => `${x.toFixed(0)} ms`;

async function seedYear(boxId, from) {
	const start = from.toISOString().slice(0, 19).replace('T', ' ');
	const spike = 300_007;
	try {
		// MariaDB's Sequence engine makes the year in one statement.
		await sql.query(
			`INSERT INTO atmosphere_readings (box_id, at, o2_ppm, h2o_ppm, source)
			 SELECT ?, ? + INTERVAL seq MINUTE,
			        IF(seq = ?, 42.5, 0.3 + (seq % 41) / 100), 0.2 + (seq % 37) / 100, 'csv'
			 FROM seq_0_to_${ROWS - 1}`,
			[boxId, start, spike]
		);
	} catch (e) {
		if (e.code !== 'ER_NO_SUCH_TABLE') throw e;
		log('no Sequence engine: inserting in batches');
		for (let i = 0; i < ROWS; i += 10_000) {
			const rows = [];
			for (let j = i; j < Math.min(ROWS, i + 10_000); j++)
				rows.push([
					boxId,
					new Date(from.getTime() + j * 60_000),
					j === spike ? 42.5 : 0.3 + (j % 41) / 100,
					0.2 + (j % 37) / 100,
					'csv'
				]);
			await sql.query(
				'INSERT INTO atmosphere_readings (box_id, at, o2_ppm, h2o_ppm, source) VALUES ?',
				[rows]
			);
		}
	}
	await sql.query('ANALYZE TABLE atmosphere_readings');
}

try {
	const [box] = await sql.query(
		"INSERT INTO boxes (name, room, gas, volume_l) VALUES ('Readings bench', 'Bench', 'Ar', 1000)"
	);
	const boxId = box.insertId;
	const from = new Date(Math.floor(Date.now() / 86_400_000) * 86_400_000 - ROWS * 60_000);
	const to = new Date(from.getTime() + ROWS * 60_000);
	let t = performance.now();
	await seedYear(boxId, from);
	log(`seeded ${ROWS.toLocaleString('en')} readings in ${ms(performance.now() - t)}`);

	const bucketed = async () => {
		const s = await readingSeries(app.db, boxId, from, to, tz);
		if (!s.bucketSeconds || s.t.length > MAX_POINTS || Math.max(...s.o2) !== 42.5)
			throw new Error(`unexpected series: ${s.t.length} points of ${s.bucketSeconds} s`);
		return s.t.length;
	};
	const plain = async () => {
		const [rows] = await sql.query(
			'SELECT at, o2_ppm, h2o_ppm FROM atmosphere_readings WHERE box_id = ? AND at >= ? AND at < ? ORDER BY at',
			[boxId, from, to]
		);
		if (rows.length !== ROWS) throw new Error(`read ${rows.length} rows`);
	};
	const exported = async () => {
		const stamp = zoneStamper(tz);
		let after = null;
		let lines = 0;
		let bytes = 0;
		for (;;) {
			const page = await readingsPage(app.db, boxId, from, to, after, 5_000);
			for (const r of page) bytes += readingCsvLine(r, stamp).length;
			lines += page.length;
			if (page.length < 5_000) break;
			after = page[page.length - 1].at;
		}
		if (lines !== ROWS) throw new Error(`exported ${lines} lines`);
		return bytes;
	};
	const timed = async (f) => {
		const t0 = performance.now();
		await f();
		return performance.now() - t0;
	};

	// A warm-up of each, then interleaved rounds.
	const rounds = async (withExport) => {
		await bucketed();
		await plain();
		const times = { bucketed: [], plain: [], exported: [] };
		for (let i = 0; i < RUNS; i++) {
			times.bucketed.push(await timed(bucketed));
			times.plain.push(await timed(plain));
			if (withExport && i < 3) times.exported.push(await timed(exported));
		}
		return {
			bucketed: median(times.bucketed),
			plain: median(times.plain),
			exported: withExport ? median(times.exported) : 0
		};
	};
	const points = await bucketed();
	const bytes = await exported();
	// What the browser would be sent: the series as the endpoint answers it, against the
	// same rows as points.
	const seriesJson = JSON.stringify(await readingSeries(app.db, boxId, from, to, tz)).length;
	const [all] = await sql.query(
		'SELECT at, o2_ppm, h2o_ppm FROM atmosphere_readings WHERE box_id = ? ORDER BY at',
		[boxId]
	);
	const rawJson = JSON.stringify({
		t: all.map((r) => r.at.getTime() / 1000),
		o2: all.map((r) => Number(r.o2_ppm)),
		h2o: all.map((r) => Number(r.h2o_ppm))
	}).length;
	const table = await rounds(true);
	console.log(`\nA year of one-minute readings, one box (${RUNS} rounds, medians)`);
	console.log(
		`bucketed chart query (${points} buckets of min and max, in MariaDB): ${ms(table.bucketed)}`
	);
	console.log(
		`plain range read of the same ${ROWS.toLocaleString('en')} rows into node: ${ms(table.plain)}`
	);
	console.log(`ratio plain/bucketed: ${(table.plain / table.bucketed).toFixed(1)}`);
	console.log(
		`JSON for the chart: ${(seriesJson / 1e3).toFixed(0)} kB bucketed, ${(rawJson / 1e6).toFixed(1)} MB as raw points`
	);
	console.log(
		`CSV export of the same rows, pages of 5,000 (${(bytes / 1e6).toFixed(1)} MB, 3 rounds): ${ms(table.exported)}`
	);

	// Both reads fetch every row's values through the (box_id, at) index, one primary-key
	// lookup per row; an index that also holds the values spares them. Tried here on this
	// bench's own table only (the app's schema does not have it).
	await sql.query(
		'CREATE INDEX bench_series_idx ON atmosphere_readings (box_id, at, o2_ppm, h2o_ppm)'
	);
	const covered = await rounds(false);
	console.log('\nWith an index on (box_id, at, o2_ppm, h2o_ppm):');
	console.log(`bucketed chart query: ${ms(covered.bucketed)}`);
	console.log(`plain range read into node: ${ms(covered.plain)}`);
	console.log(`ratio plain/bucketed: ${(covered.plain / covered.bucketed).toFixed(1)}`);
} finally {
	await sql.end();
	await app.pool.end();
	await database.stop();
}
