import { mkdtemp, readdir, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import {
	CreateBucketCommand,
	GetObjectCommand,
	HeadObjectCommand,
	S3Client
} from '@aws-sdk/client-s3';
// @ts-expect-error s3rver 3.7 ships no type declarations
import S3rverModule from 's3rver';
import { afterAll, afterEach, beforeAll, beforeEach, describe, expect, it, vi } from 'vitest';
import {
	MAX_DOCUMENT_BYTES,
	checkDocument,
	get,
	put,
	remove,
	sniffImage,
	sniffPdf
} from './storage';
import { minimalPdf, png } from '../../../tests/support/files';

interface FakeS3 {
	run(): Promise<{ port: number }>;
	close(): Promise<void>;
}
const S3rver = S3rverModule as new (options: object) => FakeS3;

const pdf = minimalPdf();

// Typed on ArrayBuffer (not ArrayBufferLike) so the result is a valid File part.
function concat(...parts: (Uint8Array | string)[]): Uint8Array<ArrayBuffer> {
	return new Uint8Array(
		Buffer.concat(parts.map((p) => (typeof p === 'string' ? Buffer.from(p) : p)))
	);
}

/** A PDF whose last cross-reference section is a stream (ISO 32000-1, §7.5.8), as PDF 1.5+ writers make. */
function xrefStreamPdf(): Uint8Array<ArrayBuffer> {
	let body = '%PDF-1.5\n%\xe2\xe3\xcf\xd3\n';
	const catalog = body.length;
	body += '1 0 obj\n<< /Type /Catalog /Pages 2 0 R >>\nendobj\n';
	const pages = body.length;
	body += '2 0 obj\n<< /Type /Pages /Kids [] /Count 0 >>\nendobj\n';
	const xref = body.length;
	const row = (type: number, offset: number) =>
		String.fromCharCode(type, (offset >> 8) & 0xff, offset & 0xff, 0);
	const rows = row(0, 0) + row(1, catalog) + row(1, pages) + row(1, xref);
	body += `3 0 obj\n<< /Type /XRef /Size 4 /W [1 2 1] /Root 1 0 R /Length ${rows.length} >>\nstream\n`;
	body += `${rows}\nendstream\nendobj\nstartxref\n${xref}\n%%EOF\n`;
	return new Uint8Array(Buffer.from(body, 'latin1'));
}

describe('sniffPdf: by structure (ISO 32000-1 §7.5; the 1024-byte windows of PDF Reference 1.7, appendix H)', () => {
	it('accepts a real minimal PDF', () => {
		expect(sniffPdf(pdf)).toEqual({ ext: 'pdf', type: 'application/pdf' });
		expect(sniffImage(pdf)).toBeNull();
	});

	it('accepts a cross-reference stream instead of a table (§7.5.8)', () => {
		expect(sniffPdf(xrefStreamPdf())).not.toBeNull();
	});

	it('accepts an incremental update appended to a PDF (§7.5.6): the last startxref counts', () => {
		const base = Buffer.from(pdf).toString('latin1');
		const at = base.length + '4 0 obj\n(note)\nendobj\n'.length;
		const update = `4 0 obj\n(note)\nendobj\nxref\n4 1\n${String(base.length).padStart(10, '0')} 00000 n \ntrailer\n<< /Size 5 /Root 1 0 R /Prev ${base.indexOf('xref')} >>\nstartxref\n${at}\n%%EOF\n`;
		expect(sniffPdf(concat(pdf, update))).not.toBeNull();
	});

	it('accepts a header after some leading bytes, and trailing bytes after %%EOF', () => {
		expect(sniffPdf(concat(' '.repeat(1000), pdf, '\n'.repeat(1000)))).not.toBeNull();
	});

	it('accepts a PDF whose startxref offset is wrong but whose table is well formed (readers rebuild it)', () => {
		const text = Buffer.from(pdf)
			.toString('latin1')
			.replace(/startxref\n\d+/, 'startxref\n7');
		expect(sniffPdf(Buffer.from(text, 'latin1'))).not.toBeNull();
	});

	it('refuses a header past the first 1024 bytes or a %%EOF before the last 1024', () => {
		expect(sniffPdf(concat(' '.repeat(1024), pdf))).toBeNull();
		expect(sniffPdf(concat(pdf, ' '.repeat(1024)))).toBeNull();
	});

	it('refuses an HTML page with %PDF- in a comment, even with the end markers', () => {
		const page = (tail: string) =>
			concat('<!doctype html>\n<!-- %PDF-1.4 -->\n<html><body><script>alert(1)</script>\n', tail);
		expect(sniffPdf(page('<!-- %%EOF -->\n'))).toBeNull();
		expect(sniffPdf(page('<!--\nstartxref\n0\n%%EOF\n-->'))).toBeNull();
		// Markup before a header is refused even when a real PDF follows it.
		expect(sniffPdf(concat('<html><!-- ', pdf))).toBeNull();
	});

	it('refuses a header without its version, and a file with no file trailer or no cross-reference', () => {
		const text = Buffer.from(pdf).toString('latin1');
		const edit = (from: string | RegExp, to: string) =>
			Buffer.from(text.replace(from, to), 'latin1');
		expect(sniffPdf(edit('%PDF-1.4', '%PDF-'))).toBeNull();
		expect(sniffPdf(edit(/startxref\n\d+\n/, ''))).toBeNull();
		expect(sniffPdf(concat('%PDF-1.4\nplain text, no objects\nstartxref\n0\n%%EOF\n'))).toBeNull();
		expect(sniffPdf(edit(/xref\n0 4\n(.|\n)*?trailer/, 'trailer'))).toBeNull();
	});

	it('refuses a PNG, an empty file and a truncated PDF', () => {
		expect(sniffPdf(png)).toBeNull();
		expect(sniffPdf(new Uint8Array())).toBeNull();
		expect(sniffPdf(pdf.subarray(0, pdf.length - 10))).toBeNull();
	});

	it('reads a view into a larger buffer by its own bounds', () => {
		const after = concat(pdf, new Uint8Array(2048));
		expect(sniffPdf(after)).toBeNull();
		expect(sniffPdf(after.subarray(0, pdf.length))).not.toBeNull();
		const before = concat(new Uint8Array(2048), pdf);
		expect(sniffPdf(before)).toBeNull();
		expect(sniffPdf(before.subarray(2048))).not.toBeNull();
	});
});

describe('checkDocument', () => {
	it('accepts a real minimal PDF and returns its bytes', async () => {
		const checked = await checkDocument(new File([pdf], 'sop.pdf', { type: 'application/pdf' }));
		expect(checked).toEqual({ ok: true, bytes: pdf, ext: 'pdf' });
	});

	it('refuses a PNG renamed .pdf, whatever type the browser claims', async () => {
		const file = new File([png], 'photo.pdf', { type: 'application/pdf' });
		expect(await checkDocument(file)).toEqual({ ok: false, message: 'That file is not a PDF.' });
	});

	it('refuses an HTML page named .pdf that carries %PDF- in a comment', async () => {
		const html = '<!doctype html><!-- %PDF-1.7 --><p>Not a PDF</p><!-- %%EOF -->';
		const file = new File([html], 'sop.pdf', { type: 'application/pdf' });
		expect(await checkDocument(file)).toEqual({ ok: false, message: 'That file is not a PDF.' });
	});

	it('refuses an empty file', async () => {
		const file = new File([], 'empty.pdf', { type: 'application/pdf' });
		expect(await checkDocument(file)).toEqual({ ok: false, message: 'That file is not a PDF.' });
	});

	it('refuses a PDF cut off before %%EOF', async () => {
		const file = new File([pdf.subarray(0, pdf.length / 2)], 'cut.pdf');
		expect(await checkDocument(file)).toEqual({ ok: false, message: 'That file is not a PDF.' });
	});

	it('accepts exactly 20 MB and refuses one byte more', async () => {
		const pad = (size: number) =>
			concat(pdf.subarray(0, 9), new Uint8Array(size - pdf.length), pdf.subarray(9));
		const atLimit = pad(MAX_DOCUMENT_BYTES);
		expect(atLimit.length).toBe(MAX_DOCUMENT_BYTES);
		expect((await checkDocument(new File([atLimit], 'big.pdf'))).ok).toBe(true);
		const tooBig = pad(MAX_DOCUMENT_BYTES + 1);
		expect(await checkDocument(new File([tooBig], 'big.pdf'))).toEqual({
			ok: false,
			message: 'The document is larger than 20 MB.'
		});
	});
});

/** put, get and remove through whichever backend the environment selects. */
function roundTrips() {
	it.each([
		['a PNG', 'gloves', png, 'png', 'image/png'],
		['a PDF', 'documents', pdf, 'pdf', 'application/pdf']
	])('stores, reads and removes %s', async (_, folder, bytes, ext, type) => {
		const key = await put(folder, bytes, ext);
		expect(key).toMatch(new RegExp(`^${folder}/[0-9a-f]{32}\\.${ext}$`));
		const file = await get(key);
		expect(file?.type).toBe(type);
		expect(Buffer.from(file!.bytes).equals(Buffer.from(bytes))).toBe(true);
		await remove(key);
		expect(await get(key)).toBeNull();
		await remove(key); // removing again is not an error
	});

	it('finds nothing under a well-formed key that was never stored', async () => {
		expect(await get(`gloves/${'0'.repeat(32)}.png`)).toBeNull();
	});

	it('refuses keys of any other shape', async () => {
		const key = await put('gloves', png, 'png');
		const name = key.split('/')[1];
		for (const bad of [
			`../uploads/${key}`,
			`gloves/../${key}`,
			`/${key}`,
			`gloves/${name}/`,
			key.replace('.png', '.txt'),
			key.replace('.png', '.PNG'),
			`Gloves/${name}`,
			name
		]) {
			expect(await get(bad), bad).toBeNull();
		}
		await expect(put('../etc', png, 'png')).rejects.toThrow();
		await expect(put('gloves', png, 'html')).rejects.toThrow();
		await remove(key);
	});
}

describe('local backend', () => {
	let dataDir: string;

	beforeAll(async () => {
		dataDir = await mkdtemp(join(tmpdir(), 'boxwright-storage-'));
	});
	beforeEach(() => {
		vi.stubEnv('BOXWRIGHT_DATA_DIR', dataDir);
		vi.stubEnv('S3_BUCKET', undefined);
	});
	afterEach(() => vi.unstubAllEnvs());
	afterAll(() => rm(dataDir, { recursive: true, force: true }));

	roundTrips();

	it('writes under BOXWRIGHT_DATA_DIR/uploads/<folder>', async () => {
		const key = await put('gloves', png, 'png');
		expect(await readdir(join(dataDir, 'uploads', 'gloves'))).toContain(key.split('/')[1]);
		await remove(key);
	});
});

describe('S3 backend (s3rver on loopback)', () => {
	const bucket = 'boxwright-test';
	const credentials = { accessKeyId: 'S3RVER', secretAccessKey: 'S3RVER' }; // s3rver's built-in pair
	let server: FakeS3;
	let s3Dir: string;
	let dataDir: string;
	let endpoint: string;
	let client: S3Client;

	beforeAll(async () => {
		s3Dir = await mkdtemp(join(tmpdir(), 'boxwright-s3rver-'));
		dataDir = await mkdtemp(join(tmpdir(), 'boxwright-storage-'));
		server = new S3rver({ address: '127.0.0.1', port: 0, directory: s3Dir, silent: true });
		const { port } = await server.run();
		endpoint = `http://127.0.0.1:${port}`;
		client = new S3Client({ endpoint, region: 'us-east-1', forcePathStyle: true, credentials });
		await client.send(new CreateBucketCommand({ Bucket: bucket }));
	});
	beforeEach(() => {
		vi.stubEnv('S3_BUCKET', bucket);
		vi.stubEnv('S3_ENDPOINT', endpoint);
		vi.stubEnv('S3_ACCESS_KEY_ID', credentials.accessKeyId);
		vi.stubEnv('S3_SECRET_ACCESS_KEY', credentials.secretAccessKey);
		vi.stubEnv('S3_REGION', undefined);
		vi.stubEnv('S3_FORCE_PATH_STYLE', undefined);
		vi.stubEnv('BOXWRIGHT_DATA_DIR', dataDir);
	});
	afterEach(() => vi.unstubAllEnvs());
	afterAll(async () => {
		client?.destroy();
		await server?.close();
		await Promise.all([s3Dir, dataDir].map((d) => d && rm(d, { recursive: true, force: true })));
	});

	roundTrips();

	it('stores the exact bytes with a content type, and nothing on local disk', async () => {
		const key = await put('documents', pdf, 'pdf');
		const head = await client.send(new HeadObjectCommand({ Bucket: bucket, Key: key }));
		expect(head.ContentType).toBe('application/pdf');
		expect(head.ContentLength).toBe(pdf.length);
		// An SDK that streamed the body aws-chunked would leave chunk framing in the object.
		const object = await client.send(new GetObjectCommand({ Bucket: bucket, Key: key }));
		const stored = await object.Body!.transformToByteArray();
		expect(Buffer.from(stored).equals(Buffer.from(pdf))).toBe(true);
		expect(await readdir(dataDir)).toEqual([]);
		await remove(key);
	});

	it('reports a missing bucket instead of pretending the file is gone', async () => {
		vi.stubEnv('S3_BUCKET', 'no-such-bucket');
		await expect(get(`gloves/${'0'.repeat(32)}.png`)).rejects.toThrow();
	});
});
