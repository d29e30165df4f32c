// The uploads as `npm run db:backup` and `db:restore` see them: local disk under
// BOXWRIGHT_DATA_DIR/uploads, or an S3 bucket when S3_BUCKET is set (the same settings
// src/lib/server/config.ts reads for storage.ts; a blank value counts as unset).
import { readdirSync, statSync } from 'node:fs';
import { join, relative, sep } from 'node:path';

/** @param {Record<string, string | undefined>} env */
export function s3SettingsOf(env = process.env) {
	const value = (name) => (env[name]?.trim() ? env[name].trim() : undefined);
	const bucket = value('S3_BUCKET');
	if (!bucket) return null;
	const endpoint = value('S3_ENDPOINT');
	const pathStyle = value('S3_FORCE_PATH_STYLE');
	return {
		bucket,
		endpoint,
		region: value('S3_REGION') ?? 'us-east-1',
		accessKeyId: value('S3_ACCESS_KEY_ID'),
		secretAccessKey: value('S3_SECRET_ACCESS_KEY'),
		forcePathStyle: pathStyle ? /^(1|true|yes)$/i.test(pathStyle) : endpoint !== undefined
	};
}

/**
 * Every object in the bucket: key, size, ETag (without its quotes) and last change, sorted
 * by key. Copying the objects is the bucket's own job (versioning, replication); the
 * listing says what the database's rows pointed at when the backup was taken.
 * @param {NonNullable<ReturnType<typeof s3SettingsOf>>} s
 */
export async function listBucket(s) {
	const { S3Client, ListObjectsV2Command } = await import('@aws-sdk/client-s3');
	const client = new S3Client({
		region: s.region,
		endpoint: s.endpoint,
		forcePathStyle: s.forcePathStyle,
		credentials:
			s.accessKeyId && s.secretAccessKey
				? { accessKeyId: s.accessKeyId, secretAccessKey: s.secretAccessKey }
				: undefined
	});
	const objects = [];
	try {
		let token;
		do {
			const page = await client.send(
				new ListObjectsV2Command({ Bucket: s.bucket, ContinuationToken: token })
			);
			for (const o of page.Contents ?? []) {
				objects.push({
					key: o.Key ?? '',
					size: o.Size ?? 0,
					etag: (o.ETag ?? '').replace(/^"|"$/g, ''),
					lastModified: o.LastModified?.toISOString() ?? null
				});
			}
			token = page.IsTruncated ? page.NextContinuationToken : undefined;
		} while (token);
	} finally {
		client.destroy();
	}
	return objects.sort((a, b) => (a.key < b.key ? -1 : a.key > b.key ? 1 : 0));
}

/**
 * Every file under `dir` (none when it does not exist): its path relative to `dir`, with
 * forward slashes as the storage keys have them, and its size.
 * @param {string} dir
 * @returns {{ key: string, size: number }[]}
 */
export function filesUnder(dir) {
	/** @type {{ key: string, size: number }[]} */
	const found = [];
	const walk = (folder) => {
		let entries;
		try {
			entries = readdirSync(folder, { withFileTypes: true });
		} catch (err) {
			if (/** @type {NodeJS.ErrnoException} */ (err).code === 'ENOENT') return;
			throw err;
		}
		for (const entry of entries) {
			const path = join(folder, entry.name);
			if (entry.isDirectory()) walk(path);
			else if (entry.isFile()) {
				found.push({ key: relative(dir, path).split(sep).join('/'), size: statSync(path).size });
			}
		}
	};
	walk(dir);
	return found.sort((a, b) => (a.key < b.key ? -1 : a.key > b.key ? 1 : 0));
}
