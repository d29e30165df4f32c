// Uploaded files (damage photos, PDF documents). Local disk under
// `${BOXWRIGHT_DATA_DIR ?? '.data'}/uploads` by default; any S3-compatible store when S3_BUCKET
// is set (S3_ENDPOINT, S3_REGION, S3_ACCESS_KEY_ID, S3_SECRET_ACCESS_KEY, S3_FORCE_PATH_STYLE:
// see .env.example), so several app processes can share the uploads. Settings come from
// `config.storage()` at each call, which lets tests switch backends; the S3 client is made
// once per set of settings.
import { mkdir, readFile, rm, writeFile } from 'node:fs/promises';
import { randomBytes } from 'node:crypto';
import { dirname, join, resolve } from 'node:path';
import {
	DeleteObjectCommand,
	GetObjectCommand,
	PutObjectCommand,
	S3Client,
	S3ServiceException
} from '@aws-sdk/client-s3';
import { MAX_DOCUMENT_BYTES } from '../domain/documents';
import { config, type StorageSettings } from './config';

export const MAX_PHOTO_BYTES = 5 * 1024 * 1024;
// Defined beside the documents' other rules so the upload form can check it before sending.
export { MAX_DOCUMENT_BYTES };

const types: Record<string, string> = {
	png: 'image/png',
	jpg: 'image/jpeg',
	webp: 'image/webp',
	pdf: 'application/pdf'
};

// The only keys `put` makes; anything else (`..`, slashes, other extensions) is refused.
const keyShape = /^[a-z-]+\/[0-9a-f]{32}\.(png|jpg|webp|pdf)$/;

type FileType = { ext: string; type: string };

/** The image type from the file's first bytes, whatever its name says; null if not an image. */
export function sniffImage(bytes: Uint8Array): FileType | null {
	const starts = (...sig: number[]) => sig.every((b, i) => bytes[i] === b);
	if (starts(0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a))
		return { ext: 'png', type: 'image/png' };
	if (starts(0xff, 0xd8, 0xff)) return { ext: 'jpg', type: 'image/jpeg' };
	if (starts(0x52, 0x49, 0x46, 0x46) && String.fromCharCode(...bytes.slice(8, 12)) === 'WEBP') {
		return { ext: 'webp', type: 'image/webp' };
	}
	return null;
}

// PDF white-space characters (ISO 32000-1, §7.2.2, table 1).
const WS = '[\\0\\t\\n\\f\\r ]';
const headerLine = /%PDF-[12]\.\d/;
const markup = /<[!?/a-z]/i;
const fileTrailer = new RegExp(`startxref${WS}+(\\d{1,12})${WS}+%%EOF`, 'g');
const xrefTable = new RegExp(`^${WS}*xref${WS}+\\d+${WS}+\\d+${WS}`);
const xrefStream = new RegExp(`^${WS}*\\d+${WS}+\\d+${WS}+obj${WS}*<<([^]*?)stream`);
const xrefStreamType = new RegExp(`/Type${WS}*/XRef(?![A-Za-z])`);
// A cross-reference section anywhere: a table (the keyword on its own line, a subsection
// header and a first 20-byte entry) or a cross-reference stream's dictionary.
const anyXrefTable = new RegExp(
	`(?:^|[\\r\\n])xref${WS}*[\\r\\n]+\\d+ \\d+${WS}*[\\r\\n]+\\d{10} \\d{5} [fn]`
);

/**
 * Whether a cross-reference section starts at `at` (before `before`, the final `startxref`):
 * an `xref` table followed by its `trailer`, or a stream object of `/Type /XRef`.
 */
function crossReferenceAt(buffer: Buffer, at: number, before: number): boolean {
	if (!Number.isSafeInteger(at) || at < 0 || at >= before) return false;
	const text = buffer.subarray(at, Math.min(at + 4096, before)).toString('latin1');
	if (xrefTable.test(text)) {
		const trailer = buffer.indexOf('trailer', at);
		return trailer !== -1 && trailer < before;
	}
	const stream = xrefStream.exec(text);
	return stream !== null && xrefStreamType.test(stream[1]);
}

/**
 * `{ ext: 'pdf' }` if the bytes are built like a whole PDF, else null. Checked by structure,
 * after ISO 32000-1:2008 (PDF 1.7), §7.5 "File structure":
 * - §7.5.2 the header `%PDF-1.n` (or `%PDF-2.0`, ISO 32000-2), found within the first
 *   1024 bytes as readers accept (PDF Reference 1.7, appendix H); nothing that
 *   looks like markup may come before it, so an HTML page with `%PDF-` in a comment is not
 *   a PDF;
 * - §7.5.5 the file trailer: `startxref`, the byte offset of the last cross-reference
 *   section and `%%EOF` at the end, the `%%EOF` within the last 1024 bytes (appendix H);
 *   a missing `%%EOF` means a truncated upload;
 * - §7.5.4 / §7.5.8 a cross-reference section: an `xref` table with its `trailer`, or a
 *   cross-reference stream (`/Type /XRef`, PDF 1.5), at that offset (counted from the file's
 *   start or, as readers do for leading bytes, from the header). Readers rebuild a wrong
 *   offset, so a file whose offset misses still passes when a well-formed section exists.
 */
export function sniffPdf(bytes: Uint8Array): { ext: 'pdf'; type: 'application/pdf' } | null {
	const buffer = Buffer.from(bytes.buffer, bytes.byteOffset, bytes.byteLength);
	const head = buffer.subarray(0, 1024).toString('latin1');
	const header = headerLine.exec(head);
	if (!header || markup.test(head.slice(0, header.index))) return null;
	const eof = buffer.lastIndexOf('%%EOF');
	if (eof === -1 || eof < buffer.length - 1024 || eof < header.index) return null;
	// The last `startxref N %%EOF` of the file (an incremental update appends another).
	const tailFrom = Math.max(header.index, buffer.length - 2048);
	const tail = buffer.subarray(tailFrom).toString('latin1');
	const trailers = [...tail.matchAll(fileTrailer)];
	const last = trailers.at(-1);
	if (!last) return null;
	const offset = Number(last[1]);
	const before = tailFrom + last.index;
	const found =
		crossReferenceAt(buffer, offset, before) ||
		crossReferenceAt(buffer, header.index + offset, before) ||
		anyCrossReference(buffer.subarray(header.index, before));
	return found ? { ext: 'pdf', type: 'application/pdf' } : null;
}

function anyCrossReference(body: Buffer): boolean {
	const text = body.toString('latin1');
	return anyXrefTable.test(text) || xrefStreamType.test(text);
}

export type PhotoCheck =
	{ ok: true; bytes: Uint8Array; ext: string } | { ok: false; message: string };

export async function checkPhoto(file: File): Promise<PhotoCheck> {
	if (file.size > MAX_PHOTO_BYTES) return { ok: false, message: 'The photo is larger than 5 MB.' };
	const bytes = new Uint8Array(await file.arrayBuffer());
	const image = sniffImage(bytes);
	if (!image) return { ok: false, message: 'That file is not a PNG, JPEG or WebP image.' };
	return { ok: true, bytes, ext: image.ext };
}

export type DocumentCheck =
	{ ok: true; bytes: Uint8Array; ext: 'pdf' } | { ok: false; message: string };

export async function checkDocument(file: File): Promise<DocumentCheck> {
	if (file.size > MAX_DOCUMENT_BYTES) {
		return { ok: false, message: 'The document is larger than 20 MB.' };
	}
	const bytes = new Uint8Array(await file.arrayBuffer());
	if (!sniffPdf(bytes)) return { ok: false, message: 'That file is not a PDF.' };
	return { ok: true, bytes, ext: 'pdf' };
}

interface Backend {
	write(key: string, bytes: Uint8Array, type: string): Promise<void>;
	/** null when there is no such file. */
	read(key: string): Promise<Uint8Array | null>;
	/** Succeeds when there is no such file. */
	delete(key: string): Promise<void>;
}

function localBackend(dataDir: string): Backend {
	const root = resolve(dataDir, 'uploads');
	return {
		async write(key, bytes) {
			const path = join(root, key);
			await mkdir(dirname(path), { recursive: true });
			await writeFile(path, bytes);
		},
		async read(key) {
			try {
				return await readFile(join(root, key));
			} catch (err) {
				if ((err as NodeJS.ErrnoException).code === 'ENOENT') return null;
				throw err;
			}
		},
		async delete(key) {
			await rm(join(root, key), { force: true });
		}
	};
}

let s3: { settings: string; client: S3Client } | null = null;

function s3Client(settings: StorageSettings): S3Client {
	const { s3AccessKeyId: accessKeyId, s3SecretAccessKey: secretAccessKey } = settings;
	const options = {
		region: settings.s3Region,
		endpoint: settings.s3Endpoint,
		// MinIO and most self-hosted stores serve buckets as paths, not as subdomains.
		forcePathStyle: settings.s3ForcePathStyle,
		// Without keys the SDK's own chain applies (AWS_* variables, instance or task roles).
		credentials: accessKeyId && secretAccessKey ? { accessKeyId, secretAccessKey } : undefined,
		// Since SDK 3.729 uploads carry a CRC32 by default (a streamed body goes aws-chunked with
		// a trailer, which s3rver and some older stores save framing and all) and downloads ask
		// for one: many S3-compatible stores mishandle both, so only when an operation needs it.
		requestChecksumCalculation: 'WHEN_REQUIRED',
		responseChecksumValidation: 'WHEN_REQUIRED'
	} as const;
	const key = JSON.stringify(options);
	if (s3?.settings !== key) {
		s3?.client.destroy();
		s3 = { settings: key, client: new S3Client(options) };
	}
	return s3.client;
}

function s3Backend(bucket: string, settings: StorageSettings): Backend {
	const client = s3Client(settings);
	return {
		async write(key, bytes, type) {
			await client.send(
				new PutObjectCommand({ Bucket: bucket, Key: key, Body: bytes, ContentType: type })
			);
		},
		async read(key) {
			try {
				const object = await client.send(new GetObjectCommand({ Bucket: bucket, Key: key }));
				return object.Body ? await object.Body.transformToByteArray() : new Uint8Array();
			} catch (err) {
				// Only a missing object is "not found"; a missing bucket is a setup error.
				if (err instanceof S3ServiceException && err.name === 'NoSuchKey') return null;
				throw err;
			}
		},
		async delete(key) {
			await client.send(new DeleteObjectCommand({ Bucket: bucket, Key: key }));
		}
	};
}

function backend(): Backend {
	const settings = config.storage();
	return settings.s3Bucket
		? s3Backend(settings.s3Bucket, settings)
		: localBackend(settings.dataDir);
}

/** Stores bytes under a fresh random key in `folder`; returns the key. */
export async function put(folder: string, bytes: Uint8Array, ext: string): Promise<string> {
	const key = `${folder}/${randomBytes(16).toString('hex')}.${ext}`;
	// A key `get` would refuse is a bug in the caller, not a user's mistake.
	if (!keyShape.test(key)) throw new Error(`Cannot store a file as ${folder}/….${ext}.`);
	await backend().write(key, bytes, types[ext]);
	return key;
}

/** Reads a stored file; keys are only ever ones `put` made (checked by shape). */
export async function get(key: string): Promise<{ bytes: Uint8Array; type: string } | null> {
	if (!keyShape.test(key)) return null;
	const bytes = await backend().read(key);
	if (!bytes) return null;
	// The type comes from the bytes, never from the key or the store's metadata.
	const found = sniffImage(bytes) ?? sniffPdf(bytes);
	return { bytes, type: found?.type ?? 'application/octet-stream' };
}

/** Deletes a stored file; a key that was never stored (or has another shape) is a no-op. */
export async function remove(key: string): Promise<void> {
	if (!keyShape.test(key)) return;
	await backend().delete(key);
}
