// `npm run db:backup` and `npm run db:restore` on the test database: the real scripts, the
// real mariadb-dump and mariadb client. The backup is restored into a fresh database of its
// own (boxwright_restore_<random>, dropped afterwards); every table's rows and a group's
// month statement (through the billing rules of src/lib/domain/usage.ts) must come back the
// same, an uploaded file with the same bytes, and a second restore into the now non-empty
// database is refused. The uploads of an S3 store are listed, not copied (s3rver on loopback).
import { spawn } from 'node:child_process';
import { randomBytes } from 'node:crypto';
import { existsSync } from 'node:fs';
import { appendFile, cp, mkdtemp, readFile, readdir, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import {
	CreateBucketCommand,
	HeadObjectCommand,
	PutObjectCommand,
	S3Client
} from '@aws-sdk/client-s3';
import { and, asc, eq, gt, lt, sql } from 'drizzle-orm';
import mysql, { type Pool, type RowDataPacket } from 'mysql2/promise';
// @ts-expect-error s3rver 3.7 ships no type declarations
import S3rverModule from 's3rver';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { toCents } from '../../src/lib/domain/money';
import { monthBounds, statement, type UsageBooking } from '../../src/lib/domain/usage';
import { connect, type Database } from '../../src/lib/server/db/connect';
import { bookings, boxes, documents, researchGroups, users } from '../../src/lib/server/db/schema';
import { closeTestDb, makeBox, makeGroup, makeUser, testDb } from '../support/db';
import { minimalPdf } from '../support/files';
import { signedIn } from '../support/http';

const root = fileURLToPath(new URL('../..', import.meta.url));
const tz = process.env.FACILITY_TZ ?? 'Europe/Berlin';
const MONTH = '2025-11';

type Run = { code: number | null; stdout: string; stderr: string };

/** Runs one of the scripts as `npm run` would, with `env` on top of the test run's own. */
function runScript(script: string, env: Record<string, string>, args: string[] = []) {
	return new Promise<Run>((done, reject) => {
		const child = spawn(process.execPath, [join(root, 'scripts', script), ...args], {
			cwd: root,
			// Blank values count as unset and keep a .env file from filling them in.
			env: { ...process.env, S3_BUCKET: '', ...env },
			stdio: ['ignore', 'pipe', 'pipe']
		});
		let stdout = '';
		let stderr = '';
		child.stdout.on('data', (c) => (stdout += c));
		child.stderr.on('data', (c) => (stderr += c));
		const timer = setTimeout(() => {
			child.kill('SIGKILL');
			reject(new Error(`${script} ran over 90 s:\n${stdout}\n${stderr}`));
		}, 90_000);
		child.on('close', (code) => {
			clearTimeout(timer);
			done({ code, stdout, stderr });
		});
	});
}

function sourceUrl(): string {
	if (!process.env.DATABASE_URL) throw new Error('DATABASE_URL is not set; run `npm test`.');
	return process.env.DATABASE_URL;
}

function urlFor(database: string): string {
	const url = new URL(sourceUrl());
	url.pathname = `/${database}`;
	return url.toString();
}

/** Rows per table, every table of the database. */
async function rowCounts(pool: Pool): Promise<Record<string, number>> {
	const [tables] = await pool.query<RowDataPacket[]>(
		`SELECT table_name AS name FROM information_schema.tables
		 WHERE table_schema = DATABASE() AND table_type = 'BASE TABLE'`
	);
	const counts: Record<string, number> = {};
	for (const { name } of tables) {
		const [[row]] = await pool.query<RowDataPacket[]>(`SELECT COUNT(*) AS n FROM \`${name}\``);
		counts[name] = Number(row.n);
	}
	return counts;
}

/** A group's statement for the month, read from one database as services/statements.ts reads it. */
async function statementOn(db: Database, groupId: number) {
	const { start, end } = monthBounds(MONTH, tz);
	const rows = await db
		.select({
			id: bookings.id,
			external: researchGroups.external,
			boxId: bookings.boxId,
			boxName: boxes.name,
			userName: users.name,
			startAt: bookings.startAt,
			endAt: bookings.endAt,
			status: bookings.status,
			cancelCause: bookings.cancelCause,
			cancelledAt: bookings.cancelledAt,
			checkInAt: bookings.checkInAt,
			checkOutAt: bookings.checkOutAt,
			confirmedAt: bookings.confirmedAt,
			heldUntil: bookings.blockedUntil,
			rateInternal: sql`${boxes.rateInternal}`.mapWith((v: string | number) => toCents(v)),
			rateExternal: sql`${boxes.rateExternal}`.mapWith((v: string | number) => toCents(v)),
			cancelWindowHours: boxes.cancelWindowHours
		})
		.from(bookings)
		.innerJoin(researchGroups, eq(researchGroups.id, bookings.groupId))
		.innerJoin(boxes, eq(boxes.id, bookings.boxId))
		.innerJoin(users, eq(users.id, bookings.userId))
		.where(and(eq(bookings.groupId, groupId), lt(bookings.startAt, end), gt(bookings.endAt, start)))
		.orderBy(asc(bookings.startAt));
	const usage: UsageBooking[] = rows.map(
		({ external, rateInternal, rateExternal, heldUntil, ...b }) => ({
			...b,
			heldUntil: b.status === 'no_show' ? heldUntil : null,
			rateCents: external ? rateExternal : rateInternal
		})
	);
	return statement(usage, MONTH, tz);
}

const z = (iso: string) => new Date(iso);
// Quotes, a backslash, `),(` and a semicolon: the row counts are read from the dump's text.
const TRICKY = `Backup: it's "quoted" ),( ; back\\slash '' end`;

const work = await mkdtemp(join(tmpdir(), 'boxwright-backup-'));
const restoreName = `boxwright_restore_${randomBytes(5).toString('hex')}`;
let restored: ReturnType<typeof connect> | undefined;
let source: ReturnType<typeof connect>;
let group: { id: number };
let storageKey: string;
let pdf: Uint8Array<ArrayBuffer>;
let folder: string;
let manifest: {
	createdAt: string;
	database: string;
	dump: { file: string; sha256: string };
	tables: Record<string, number>;
	rows: number;
	uploads: { storage: string; files: number };
};
let before: Record<string, number>;
let after: Record<string, number>;
let restoreRun: Run;

beforeAll(async () => {
	source = connect(sourceUrl(), 2);

	// A group's month with one line of each kind that bills differently.
	group = await makeGroup('backup');
	const member = await makeUser('member', { group: group.id });
	const boxId = await makeBox({ rateInternal: 12.5, rateExternal: 30, cancelWindowHours: 24 });
	const base = {
		boxId,
		userId: member.id,
		groupId: group.id,
		purpose: 'Backup test',
		confirmedAt: z('2025-10-20T08:00:00Z')
	};
	await testDb()
		.insert(bookings)
		.values([
			// Used, 3 h × 12.50 = 37.50.
			{
				...base,
				purpose: TRICKY,
				startAt: z('2025-11-04T08:00:00Z'),
				endAt: z('2025-11-04T11:00:00Z'),
				blockedUntil: z('2025-11-04T11:00:00Z'),
				status: 'completed',
				checkInAt: z('2025-11-04T08:05:00Z'),
				checkOutAt: z('2025-11-04T10:40:00Z')
			},
			// Cancelled by the member 2 h before, inside the 24 h window: 2 h = 25.00.
			{
				...base,
				startAt: z('2025-11-11T09:00:00Z'),
				endAt: z('2025-11-11T11:00:00Z'),
				blockedUntil: z('2025-11-11T11:00:00Z'),
				status: 'cancelled',
				cancelCause: 'user',
				cancelledAt: z('2025-11-11T07:00:00Z')
			},
			// Cancelled for an outage: never billed.
			{
				...base,
				startAt: z('2025-11-18T09:00:00Z'),
				endAt: z('2025-11-18T10:00:00Z'),
				blockedUntil: z('2025-11-18T10:00:00Z'),
				status: 'cancelled',
				cancelCause: 'outage',
				cancelledAt: z('2025-11-17T09:00:00Z')
			},
			// No-show freed after 15 min: 0.25 h × 12.50 = 3.125, billed 3.13 (half up).
			{
				...base,
				startAt: z('2025-11-25T12:00:00Z'),
				endAt: z('2025-11-25T14:00:00Z'),
				blockedUntil: z('2025-11-25T12:15:00Z'),
				status: 'no_show'
			}
		]);

	// An uploaded file, through the app.
	const manager = await signedIn(await makeUser('manager'));
	const title = `Backup SOP ${randomBytes(4).toString('hex')}`;
	pdf = minimalPdf();
	const body = new FormData();
	body.set('title', title);
	body.set('boxId', String(boxId));
	body.set('file', new Blob([pdf], { type: 'application/pdf' }), 'sop.pdf');
	const uploaded = await manager.request('POST', '/api/documents', body);
	expect(uploaded.status).toBe(201);
	const [doc] = await testDb()
		.select({ key: documents.storageKey })
		.from(documents)
		.where(eq(documents.title, title));
	storageKey = doc.key;

	before = await rowCounts(source.pool);
	const backup = await runScript('backup.mjs', { BACKUP_DIR: join(work, 'backups') });
	expect(backup.code, backup.stdout + backup.stderr).toBe(0);
	after = await rowCounts(source.pool);
	const [name] = await readdir(join(work, 'backups'));
	folder = join(work, 'backups', name);
	manifest = JSON.parse(await readFile(join(folder, 'manifest.json'), 'utf8'));

	// A fresh, empty database beside the test database.
	const server = await mysql.createConnection({ uri: urlFor('') });
	try {
		await server.query(`CREATE DATABASE \`${restoreName}\``);
	} catch (err) {
		throw new Error(
			`cannot create ${restoreName} (${(err as Error).message}); the test database's user ` +
				'needs rights on boxwright_restore_% (npm test grants them on the private MariaDB)',
			{ cause: err }
		);
	} finally {
		await server.end();
	}
	restored = connect(urlFor(restoreName), 2);
	restoreRun = await runScript(
		'restore.mjs',
		{ DATABASE_URL: urlFor(restoreName), BOXWRIGHT_DATA_DIR: join(work, 'restored-data') },
		[folder]
	);
}, 180_000);

afterAll(async () => {
	await restored?.pool.end();
	await source?.pool.end();
	const server = await mysql.createConnection({ uri: urlFor('') });
	await server.query(`DROP DATABASE IF EXISTS \`${restoreName}\``);
	await server.end();
	await rm(work, { recursive: true, force: true });
	await closeTestDb();
});

describe('npm run db:backup', () => {
	it('writes a dated folder with the dump, the uploads and a manifest', async () => {
		expect(folder.split('/').pop()).toMatch(/^\d{4}-\d\d-\d\dT\d\d-\d\d-\d\dZ(-\d+)?$/);
		expect(existsSync(join(folder, manifest.dump.file))).toBe(true);
		expect(manifest.dump.sha256).toMatch(/^[0-9a-f]{64}$/);
		expect(manifest.database).toBe(new URL(sourceUrl()).pathname.slice(1));
		expect(Date.parse(manifest.createdAt)).toBeGreaterThan(Date.now() - 10 * 60_000);
		expect(manifest.uploads.storage).toBe('local');
		expect(manifest.uploads.files).toBeGreaterThanOrEqual(1);
		const copy = await readFile(join(folder, 'uploads', storageKey));
		expect(Buffer.from(copy).equals(Buffer.from(pdf))).toBe(true);
	});

	it("counts every table's rows as the database held them", () => {
		// Every table of the database is in the dump, and nothing else.
		expect(Object.keys(manifest.tables).sort()).toEqual(Object.keys(before).sort());
		expect(manifest.rows).toBe(Object.values(manifest.tables).reduce((a, b) => a + b, 0));
		// The app runs on meanwhile (sessions, the outbox): tables that changed while the
		// backup ran are left out of this comparison, never the ones this test wrote.
		const quiet = Object.keys(before).filter((t) => before[t] === after[t]);
		expect(quiet).toEqual(expect.arrayContaining(['bookings', 'documents', 'users', 'boxes']));
		for (const table of quiet)
			expect([table, manifest.tables[table]]).toEqual([table, before[table]]);
	});
});

describe('npm run db:restore', () => {
	it('restores every table with the rows of the backup', async () => {
		expect(restoreRun.code, restoreRun.stdout + restoreRun.stderr).toBe(0);
		const counts = await rowCounts(restored!.pool);
		expect(counts).toEqual(manifest.tables);
	});

	it('gives the same month statement for the group, to the cent', async () => {
		const original = await statementOn(source.db, group.id);
		const copy = await statementOn(restored!.db, group.id);
		// 37.50 + 25.00 + 0 + 3.13, worked out by hand from the billing rules.
		expect(original.totals.amountCents).toBe(6563);
		expect(copy.totals).toEqual(original.totals);
		expect(copy.lines).toEqual(original.lines);
		const [row] = await restored!.db
			.select({ purpose: bookings.purpose })
			.from(bookings)
			.where(eq(bookings.purpose, TRICKY));
		expect(row?.purpose).toBe(TRICKY);
	});

	it('copies the uploaded files back with the same bytes', async () => {
		const copy = await readFile(join(work, 'restored-data', 'uploads', storageKey));
		expect(Buffer.from(copy).equals(Buffer.from(pdf))).toBe(true);
	});

	it('refuses a database that is not empty, and changes nothing in it', async () => {
		const users0 = (await rowCounts(restored!.pool)).users;
		const again = await runScript(
			'restore.mjs',
			{ DATABASE_URL: urlFor(restoreName), BOXWRIGHT_DATA_DIR: join(work, 'restored-data') },
			[folder]
		);
		expect(again.code).not.toBe(0);
		expect(again.stderr).toMatch(/is not empty: it has \d+ tables/);
		expect((await rowCounts(restored!.pool)).users).toBe(users0);
	});

	it('refuses a dump that no longer matches its manifest before touching anything', async () => {
		const damaged = join(work, 'damaged');
		await cp(folder, damaged, { recursive: true });
		await appendFile(join(damaged, manifest.dump.file), 'x');
		const run = await runScript('restore.mjs', { DATABASE_URL: urlFor(restoreName) }, [damaged]);
		expect(run.code).not.toBe(0);
		expect(run.stderr).toMatch(/does not match the SHA-256 in its manifest/);
	});

	it('refuses a folder without a manifest', async () => {
		const empty = await mkdtemp(join(work, 'not-a-backup-'));
		const run = await runScript('restore.mjs', { DATABASE_URL: urlFor(restoreName) }, [empty]);
		expect(run.code).not.toBe(0);
		expect(run.stderr).toMatch(/holds no manifest\.json/);
	});
});

type FakeS3 = { run(): Promise<{ port: number }>; close(): Promise<void> };
const S3rver = S3rverModule as new (options: object) => FakeS3;

describe('npm run db:backup with uploads in S3', () => {
	it('lists the bucket (keys, sizes, ETags) instead of copying it', async () => {
		const bucket = 'boxwright-backup-test';
		const credentials = { accessKeyId: 'S3RVER', secretAccessKey: 'S3RVER' }; // s3rver's own pair
		const s3Dir = join(work, 's3');
		const fake = new S3rver({ address: '127.0.0.1', port: 0, directory: s3Dir, silent: true });
		const { port } = await fake.run();
		const endpoint = `http://127.0.0.1:${port}`;
		const client = new S3Client({
			endpoint,
			region: 'us-east-1',
			forcePathStyle: true,
			credentials,
			// As storage.ts: no checksums the fake store would keep as part of the object.
			requestChecksumCalculation: 'WHEN_REQUIRED',
			responseChecksumValidation: 'WHEN_REQUIRED'
		});
		try {
			await client.send(new CreateBucketCommand({ Bucket: bucket }));
			const keys = [`documents/${'a'.repeat(32)}.pdf`, `gloves/${'b'.repeat(32)}.png`];
			for (const Key of keys) {
				await client.send(new PutObjectCommand({ Bucket: bucket, Key, Body: pdf }));
			}
			const run = await runScript('backup.mjs', {
				BACKUP_DIR: join(work, 's3-backups'),
				S3_BUCKET: bucket,
				S3_ENDPOINT: endpoint,
				S3_ACCESS_KEY_ID: credentials.accessKeyId,
				S3_SECRET_ACCESS_KEY: credentials.secretAccessKey
			});
			expect(run.code, run.stdout + run.stderr).toBe(0);
			const [name] = await readdir(join(work, 's3-backups'));
			const dir = join(work, 's3-backups', name);
			const kept = JSON.parse(await readFile(join(dir, 'manifest.json'), 'utf8'));
			expect(kept.uploads).toMatchObject({ storage: 's3', bucket, files: 2 });
			expect(existsSync(join(dir, 'uploads'))).toBe(false);
			const listing = JSON.parse(await readFile(join(dir, 'uploads-s3.json'), 'utf8'));
			expect(listing.objects.map((o: { key: string }) => o.key)).toEqual(keys);
			for (const o of listing.objects as { key: string; size: number; etag: string }[]) {
				const head = await client.send(new HeadObjectCommand({ Bucket: bucket, Key: o.key }));
				expect(o.size).toBe(pdf.length);
				expect(o.etag).toBe(head.ETag!.replace(/"/g, ''));
			}
		} finally {
			client.destroy();
			await fake.close();
		}
	}, 120_000);
});
