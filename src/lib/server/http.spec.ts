import { describe, expect, it } from 'vitest';
import { shapeApiError } from './http';

describe('shapeApiError', () => {
	it('rewrites SvelteKit error bodies into { error: { code, message, details } }', async () => {
		const raw = new Response(JSON.stringify({ message: 'No.', code: 'forbidden' }), {
			status: 403,
			headers: { 'content-type': 'application/json' }
		});
		const shaped = await shapeApiError(raw);
		expect(shaped.status).toBe(403);
		expect(await shaped.json()).toEqual({ error: { code: 'forbidden', message: 'No.' } });
	});

	it('gives a code from the status when none was set, also for HTML errors', async () => {
		const shaped = await shapeApiError(new Response('<p>gone</p>', { status: 404 }));
		expect(await shaped.json()).toEqual({ error: { code: 'not_found', message: 'Not found.' } });
	});

	it('leaves successful and already shaped responses alone', async () => {
		const ok = new Response('{}', { status: 200 });
		expect(await shapeApiError(ok)).toBe(ok);
		const done = new Response(JSON.stringify({ error: { code: 'x', message: 'y' } }), {
			status: 409,
			headers: { 'content-type': 'application/json' }
		});
		expect(await shapeApiError(done)).toBe(done);
	});
});
