// `npm run db:backup`: a consistent dump of the database and the uploads, in a folder of its
// own named by the time (BACKUP_DIR, default BOXWRIGHT_DATA_DIR/backups):
//
//   2026-12-02T09-30-00Z/
//     database.sql.gz   mariadb-dump --single-transaction --routines --triggers: one snapshot,
//                       taken without locking the app out (every table is InnoDB)
//     uploads/          a copy of the uploads on local disk, taken after the dump, or
//     uploads-s3.json   with S3_BUCKET, a listing of the bucket (key, size, ETag): copying a
//                       bucket is the bucket's own job (versioning, replication)
//     manifest.json     when, which database, rows per table (counted in the dump itself),
//                       the files, the dump's SHA-256; written last, so a folder without
//                       it is an unfinished backup
//
// The database is DATABASE_URL (or .env), else the private MariaDB of `npm start` (DB_NAME,
// default boxwright), started for the backup when it is not running.
// `npm run db:restore -- FOLDER` puts it back.
import { spawn } from 'node:child_process';
import { createHash } from 'node:crypto';
import {
	cpSync,
	createReadStream,
	createWriteStream,
	existsSync,
	mkdirSync,
	rmSync,
	statSync,
	writeFileSync
} from 'node:fs';
import { join, resolve } from 'node:path';
import { pipeline } from 'node:stream/promises';
import { createGzip } from 'node:zlib';
import {
	dataDir,
	ensureDatabase,
	ensureDebianPackage,
	fail,
	loadEnvFile,
	log,
	root
} from './lib/setup.mjs';
import {
	DUMP_FILE,
	MANIFEST_FILE,
	S3_LISTING_FILE,
	UPLOADS_FOLDER,
	backupName,
	count,
	connectionOf,
	countDumpRows,
	serverOf,
	withOptionFile
} from './lib/dump.mjs';
import { filesUnder, listBucket, s3SettingsOf } from './lib/uploads.mjs';

const DUMP_OPTIONS = [
	'--single-transaction',
	'--routines',
	'--triggers',
	'--hex-blob',
	'--default-character-set=utf8mb4'
];

loadEnvFile();
const dumpTool = ensureDebianPackage('mariadb-client', 'mariadb-dump', 'The backup');
if (!process.env.DATABASE_URL && !existsSync(join(dataDir(), 'mariadb', 'mysql'))) {
	fail(
		`There is no database to back up: no DATABASE_URL and no private MariaDB in ${dataDir()}. ` +
			'Set DATABASE_URL (or put it in .env), or run `npm start` once.'
	);
}

/** A new folder under `parent` named by the time; `-2`, `-3`… when one exists already. */
function newFolder(parent, at) {
	mkdirSync(parent, { recursive: true });
	for (let n = 1; ; n++) {
		const path = join(parent, n === 1 ? backupName(at) : `${backupName(at)}-${n}`);
		try {
			mkdirSync(path);
			return path;
		} catch (err) {
			if (/** @type {NodeJS.ErrnoException} */ (err).code !== 'EEXIST') throw err;
		}
	}
}

/** Streams the dump through gzip into `file`; rejects with mariadb-dump's own words. */
async function dump(url, file) {
	const { database } = connectionOf(url);
	await withOptionFile(url, async (optionFile) => {
		const child = spawn(dumpTool, [`--defaults-file=${optionFile}`, ...DUMP_OPTIONS, database], {
			stdio: ['ignore', 'pipe', 'pipe']
		});
		let stderr = '';
		child.stderr.on('data', (chunk) => (stderr += chunk));
		const exited = new Promise((done) => child.on('close', (code) => done(code)));
		await pipeline(child.stdout, createGzip(), createWriteStream(file));
		const code = await exited;
		if (code !== 0) throw new Error(`mariadb-dump exited with ${code}:\n${stderr.trim()}`);
	});
}

async function sha256(file) {
	const hash = createHash('sha256');
	for await (const chunk of createReadStream(file)) hash.update(chunk);
	return hash.digest('hex');
}

/** The uploads: a copy of the local folder, or a listing of the bucket. */
async function uploads(folder) {
	const s3 = s3SettingsOf();
	if (s3) {
		const objects = await listBucket(s3);
		const listing = { bucket: s3.bucket, endpoint: s3.endpoint ?? null, objects };
		writeFileSync(join(folder, S3_LISTING_FILE), JSON.stringify(listing, null, '\t') + '\n');
		return {
			storage: 's3',
			bucket: s3.bucket,
			endpoint: s3.endpoint ?? null,
			listing: S3_LISTING_FILE,
			files: objects.length,
			bytes: objects.reduce((sum, o) => sum + o.size, 0)
		};
	}
	const source = join(dataDir(), 'uploads');
	const target = join(folder, UPLOADS_FOLDER);
	if (existsSync(source)) cpSync(source, target, { recursive: true, preserveTimestamps: true });
	else mkdirSync(target);
	const files = filesUnder(target);
	return {
		storage: 'local',
		folder: UPLOADS_FOLDER,
		files: files.length,
		bytes: files.reduce((sum, f) => sum + f.size, 0)
	};
}

const db = await ensureDatabase({ database: process.env.DB_NAME ?? 'boxwright' });
const createdAt = new Date();
const parent = resolve(root, process.env.BACKUP_DIR || join(dataDir(), 'backups'));
const folder = newFolder(parent, createdAt);
let code = 0;
try {
	const { database } = connectionOf(db.url);
	log(`dumping ${database} on ${serverOf(db.url)} into ${folder}…`);
	const dumpFile = join(folder, DUMP_FILE);
	await dump(db.url, dumpFile);
	const { tables, serverVersion } = await countDumpRows(dumpFile);
	const files = await uploads(folder);
	const manifest = {
		format: 1,
		createdAt: createdAt.toISOString(),
		database,
		server: serverOf(db.url),
		serverVersion,
		dump: {
			file: DUMP_FILE,
			bytes: statSync(dumpFile).size,
			sha256: await sha256(dumpFile),
			options: DUMP_OPTIONS
		},
		tables,
		rows: Object.values(tables).reduce((sum, n) => sum + n, 0),
		uploads: files
	};
	writeFileSync(join(folder, MANIFEST_FILE), JSON.stringify(manifest, null, '\t') + '\n');
	const bytes = manifest.dump.bytes;
	const size =
		bytes < 1024 * 1024
			? `${Math.ceil(bytes / 1024)} kB`
			: `${(bytes / 1024 / 1024).toFixed(1)} MB`;
	const where = files.storage === 's3' ? `listed in bucket ${files.bucket}` : 'copied';
	log(
		`backup written to ${folder}: ${Object.keys(tables).length} tables, ${manifest.rows} rows ` +
			`(${size} compressed), ${count(files.files, 'uploaded file')} ${where}`
	);
} catch (err) {
	rmSync(folder, { recursive: true, force: true });
	console.error(`[boxwright] the backup failed; nothing was kept.\n${err.message}`);
	code = 1;
} finally {
	await db.stop();
}
process.exit(code);
