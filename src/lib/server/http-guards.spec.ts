import { describe, expect, it } from 'vitest';
import { MAX_DOCUMENT_BYTES } from '../domain/documents';
import { MAX_CSV_BYTES } from '../domain/readings-csv';
import { parseSettings } from './config';
import { FORM_OVERHEAD_BYTES, actionData, bodyCapFor, countedBody, discard } from './http-guards';
import { MAX_PHOTO_BYTES } from './storage';

const at = (path: string) => new URL(path, 'http://boxes.test');

describe('bodyCapFor', () => {
	it('gives the upload routes their upload’s cap plus the form around it', () => {
		expect(bodyCapFor(at('/api/boxes/7/readings/import?preview=1'), 1000).bytes).toBe(
			MAX_CSV_BYTES + FORM_OVERHEAD_BYTES
		);
		expect(bodyCapFor(at('/api/documents'), 1000).bytes).toBe(
			MAX_DOCUMENT_BYTES + FORM_OVERHEAD_BYTES
		);
		const photo = bodyCapFor(at('/boxes/3/ports/9/damage?/report'), 1000);
		expect(photo).toMatchObject({ bytes: MAX_PHOTO_BYTES + FORM_OVERHEAD_BYTES, field: 'photo' });
		expect(photo.message).toBe('The photo is larger than 5 MB.');
		expect(bodyCapFor(at('/boxes/3/here?/damage'), 1000)).toMatchObject({ form: 'damage' });
	});

	it('keeps every other route, and the upload pages’ other actions, to the default', () => {
		for (const path of [
			'/api/session',
			'/signin',
			'/signin?/default',
			'/boxes/3/here?/reading',
			'/boxes/3/ports/9/damage?/outageNow',
			'/api/documents/4',
			'/api/boxes/7/readings/import/extra',
			'/api/boxes/x/readings/import'
		]) {
			expect(bodyCapFor(at(path), 1000), path).toEqual({
				bytes: 1000,
				message: 'The request is larger than 1 kB.'
			});
		}
	});
});

describe('countedBody', () => {
	const streamOf = (...chunks: number[]) =>
		new ReadableStream<Uint8Array>({
			start(c) {
				for (const n of chunks) c.enqueue(new Uint8Array(n));
				c.close();
			}
		});

	it('passes a body within the cap through whole', async () => {
		const counted = countedBody(streamOf(400, 600), { bytes: 1000, message: 'x' });
		expect((await new Response(counted.stream).arrayBuffer()).byteLength).toBe(1000);
		expect(counted.exceeded).toBe(false);
	});

	it('ends a longer one with a 413 as soon as it passes the cap', async () => {
		const counted = countedBody(streamOf(600, 600, 600), { bytes: 1000, message: 'Too big.' });
		const read = new Response(counted.stream).arrayBuffer();
		await expect(read).rejects.toMatchObject({ status: 413, body: { code: 'too_large' } });
		expect(counted.exceeded).toBe(true);
	});
});

describe('discard', () => {
	it('throws away a refused body, cancelling it past the limit, and never throws', async () => {
		let cancelled = false;
		let pulled = 0;
		const endless = new ReadableStream<Uint8Array>({
			pull(c) {
				pulled++;
				c.enqueue(new Uint8Array(100));
			},
			cancel() {
				cancelled = true;
			}
		});
		await discard(endless, 1000);
		expect(cancelled).toBe(true);
		expect(pulled).toBeLessThan(20);

		// A body adapter-node already ended (its own limit) or a client that went away.
		const gone = new ReadableStream<Uint8Array>({
			start(c) {
				c.error(new Error('aborted'));
			}
		});
		await expect(discard(gone)).resolves.toBeUndefined();
	});
});

describe('actionData', () => {
	it('writes an action’s answer as devalue’s flat array, which enhanced forms read', () => {
		expect(
			JSON.parse(actionData({ form: 'damage', errors: { photo: 'Too big.' }, values: {} }))
		).toEqual([{ form: 1, errors: 2, values: 4 }, 'damage', { photo: 3 }, 'Too big.', {}]);
	});
});

describe('BODY_LIMIT_DEFAULT', () => {
	it('is 64 kB unless set, in bytes or with K, M or G as adapter-node writes sizes', () => {
		expect(parseSettings({}).bodyLimitDefault).toBe(65_536);
		expect(parseSettings({ BODY_LIMIT_DEFAULT: '128k' }).bodyLimitDefault).toBe(131_072);
		expect(parseSettings({ BODY_LIMIT_DEFAULT: '1M' }).bodyLimitDefault).toBe(1_048_576);
		expect(parseSettings({ BODY_LIMIT_DEFAULT: '10000' }).bodyLimitDefault).toBe(10_000);
	});

	it('refuses what is not a size, or too small for a sign-in form', () => {
		expect(() => parseSettings({ BODY_LIMIT_DEFAULT: '64 kB' })).toThrow(/BODY_LIMIT_DEFAULT/);
		expect(() => parseSettings({ BODY_LIMIT_DEFAULT: '1K' })).toThrow(/at least 4096 bytes/);
	});
});
