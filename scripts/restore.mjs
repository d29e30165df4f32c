// `npm run db:restore -- FOLDER`: puts a backup of `npm run db:backup` back, into an EMPTY
// database only, so nothing is ever overwritten. The database is DATABASE_URL (or .env;
// created when it does not exist and the user may), else the private MariaDB of
// `npm start` (DB_NAME, default boxwright).
//
// In order: the folder's manifest.json is read and the dump checked against its SHA-256;
// the database is checked to hold no tables; the dump is fed to the `mariadb` client; every
// table's rows are counted and compared with the manifest; then uploads kept as files are
// copied into BOXWRIGHT_DATA_DIR/uploads (a file already there is left as it is). Uploads
// kept in S3 stay in their bucket: the listing in the backup is compared with the bucket
// named by S3_BUCKET when it is set.
import { spawn } from 'node:child_process';
import { createHash } from 'node:crypto';
import { cpSync, createReadStream, existsSync, readFileSync } from 'node:fs';
import { join, resolve } from 'node:path';
import { pipeline } from 'node:stream/promises';
import { createGunzip } from 'node:zlib';
import {
	dataDir,
	ensureDatabase,
	ensureDebianPackage,
	fail,
	loadEnvFile,
	log
} from './lib/setup.mjs';
import {
	MANIFEST_FILE,
	UPLOADS_FOLDER,
	connectionOf,
	count,
	serverOf,
	withOptionFile
} from './lib/dump.mjs';
import { filesUnder, listBucket, s3SettingsOf } from './lib/uploads.mjs';

/** A refusal: said plainly, without a stack. */
class Refusal extends Error {}

loadEnvFile();
const argument = process.argv[2];
if (!argument) {
	fail(
		'Name the backup folder to restore: npm run db:restore -- .data/backups/2026-12-02T09-30-00Z'
	);
}
// `npm run` starts in the project; a relative folder means the one the command was typed in.
const folder = resolve(process.env.INIT_CWD ?? process.cwd(), argument);
const manifestFile = join(folder, MANIFEST_FILE);
if (!existsSync(manifestFile)) {
	fail(
		`${folder} holds no ${MANIFEST_FILE}: it is not a backup of \`npm run db:backup\`, or one ` +
			'that did not finish.'
	);
}
const manifest = JSON.parse(readFileSync(manifestFile, 'utf8'));
if (manifest.format !== 1) fail(`${manifestFile} is in a format this version does not know.`);
const dumpFile = join(folder, manifest.dump.file);
if (!existsSync(dumpFile)) fail(`The dump ${dumpFile} named by the manifest is missing.`);

async function sha256(file) {
	const hash = createHash('sha256');
	for await (const chunk of createReadStream(file)) hash.update(chunk);
	return hash.digest('hex');
}
if ((await sha256(dumpFile)) !== manifest.dump.sha256) {
	fail(
		`${dumpFile} does not match the SHA-256 in its manifest: the file was changed or damaged ` +
			'since the backup. Nothing was restored.'
	);
}

const client = ensureDebianPackage('mariadb-client', 'mariadb', 'The restore');
const { default: mysql } = await import('mysql2/promise');

/** A connection to the database, creating it first when it does not exist. */
async function open(url) {
	try {
		return await mysql.createConnection({ uri: url });
	} catch (err) {
		if (err.code !== 'ER_BAD_DB_ERROR') throw err;
	}
	const { database } = connectionOf(url);
	const server = new URL(url);
	server.pathname = '/';
	const admin = await mysql.createConnection({ uri: server.toString() });
	try {
		await admin.query(`CREATE DATABASE \`${database.replace(/`/g, '``')}\``);
		log(`created the database ${database}`);
	} catch (err) {
		throw new Refusal(
			`The database ${database} does not exist on ${serverOf(url)} and could not be created ` +
				`(${err.message}). Create it empty, then restore again.`
		);
	} finally {
		await admin.end();
	}
	return mysql.createConnection({ uri: url });
}

/** Rows per table of the database, for the tables the manifest names. */
async function rowCounts(connection, tables) {
	const counts = {};
	for (const table of tables) {
		const [rows] = await connection.query(
			`SELECT COUNT(*) AS n FROM \`${table.replace(/`/g, '``')}\``
		);
		counts[table] = Number(rows[0].n);
	}
	return counts;
}

/** Feeds the gzipped dump to the `mariadb` client; rejects with the client's own words. */
async function load(url) {
	const { database } = connectionOf(url);
	await withOptionFile(url, async (optionFile) => {
		const child = spawn(client, [`--defaults-file=${optionFile}`, database], {
			stdio: ['pipe', 'ignore', 'pipe']
		});
		let stderr = '';
		child.stderr.on('data', (chunk) => (stderr += chunk));
		const exited = new Promise((done) => child.on('close', (code) => done(code)));
		const fed = pipeline(createReadStream(dumpFile), createGunzip(), child.stdin).catch(
			(err) => err
		);
		const code = await exited;
		const feedError = await fed;
		if (code !== 0) throw new Error(`the mariadb client exited with ${code}:\n${stderr.trim()}`);
		if (feedError) throw feedError;
	});
}

/** Uploads kept as files go back under the data folder; a listing is checked against S3. */
async function restoreUploads() {
	const kept = manifest.uploads;
	const s3 = s3SettingsOf();
	if (kept.storage === 'local') {
		if (s3) {
			log(
				`the backup's ${count(kept.files, 'uploaded file')} are in ${join(folder, kept.folder)}, but ` +
					`S3_BUCKET is set: copy them into the bucket ${s3.bucket} with the store's own tools.`
			);
			return;
		}
		const source = join(folder, kept.folder ?? UPLOADS_FOLDER);
		const target = join(dataDir(), 'uploads');
		const before = new Set(filesUnder(target).map((f) => f.key));
		if (existsSync(source)) {
			cpSync(source, target, { recursive: true, force: false, preserveTimestamps: true });
		}
		const files = filesUnder(source);
		const copied = files.filter((f) => !before.has(f.key)).length;
		log(
			`${count(copied, 'uploaded file')} copied into ${target}` +
				(files.length > copied ? ` (${files.length - copied} were already there)` : '')
		);
		return;
	}
	const listing = JSON.parse(readFileSync(join(folder, kept.listing), 'utf8'));
	if (!s3) {
		log(
			`the uploads were in the S3 bucket ${listing.bucket} (${listing.objects.length} objects, ` +
				`listed in ${kept.listing}); set S3_BUCKET and the S3_* settings to serve them.`
		);
		return;
	}
	const present = new Map((await listBucket(s3)).map((o) => [o.key, o]));
	const missing = listing.objects.filter((o) => present.get(o.key)?.etag !== o.etag);
	log(
		missing.length
			? `${missing.length} of ${listing.objects.length} objects listed in the backup are missing ` +
					`or changed in the bucket ${s3.bucket}, e.g. ${missing[0].key}: restore them with ` +
					`the bucket's own tools (versioning, replication).`
			: `all ${listing.objects.length} objects listed in the backup are in the bucket ${s3.bucket}`
	);
}

const db = await ensureDatabase({ database: process.env.DB_NAME ?? 'boxwright' });
let code = 0;
let connection;
let loading = false;
try {
	const { database } = connectionOf(db.url);
	connection = await open(db.url);
	const [present] = await connection.query(
		'SELECT table_name AS name FROM information_schema.tables WHERE table_schema = ? ORDER BY 1',
		[database]
	);
	if (present.length) {
		const names = present.map((t) => t.name);
		const shown = names.slice(0, 5).join(', ') + (names.length > 5 ? ', …' : '');
		throw new Refusal(
			`The database ${database} on ${serverOf(db.url)} is not empty: it has ${names.length} ` +
				`tables (${shown}). db:restore only restores into an empty database, so nothing is ` +
				'overwritten: create a new one and point DATABASE_URL at it (for the private MariaDB, ' +
				'set DB_NAME, e.g. DB_NAME=boxwright_restored), then restore again.'
		);
	}
	log(
		`restoring ${manifest.database} of ${manifest.createdAt} into ${database} on ${serverOf(db.url)}…`
	);
	loading = true;
	await load(db.url);
	loading = false;
	const tables = Object.keys(manifest.tables);
	const counts = await rowCounts(connection, tables);
	const wrong = tables.filter((t) => counts[t] !== manifest.tables[t]);
	if (wrong.length) {
		throw new Error(
			'the restored rows differ from the manifest: ' +
				wrong.map((t) => `${t} ${counts[t]} (backup: ${manifest.tables[t]})`).join(', ')
		);
	}
	log(
		`${tables.length} tables restored, ${manifest.rows} rows, each table's count as in the backup`
	);
	await restoreUploads();
} catch (err) {
	console.error(
		err instanceof Refusal
			? `[boxwright] ${err.message}`
			: `[boxwright] the restore failed: ${err.message}` +
					(loading
						? `\nThe database ${connectionOf(db.url).database} may now hold part of the ` +
							'backup: drop it, or empty it, before restoring again.'
						: '')
	);
	code = 1;
} finally {
	await connection?.end();
	await db.stop();
}
process.exit(code);
