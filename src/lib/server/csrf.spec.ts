import { describe, expect, it } from 'vitest';
import { CSRF_MESSAGE, csrfRefusal, isCrossSite } from './csrf';

const origin = 'https://boxes.example.org';

const request = (method: string, headers: Record<string, string> = {}) =>
	new Request(`${origin}/api/bookings`, { method, headers });

describe('isCrossSite', () => {
	it('lets safe methods through from anywhere', () => {
		for (const method of ['GET', 'HEAD', 'OPTIONS'])
			expect(isCrossSite(request(method, { origin: 'https://evil.example' }), origin)).toBe(false);
	});

	it('refuses any unsafe request a browser says comes from another origin', () => {
		for (const method of ['POST', 'PUT', 'PATCH', 'DELETE'])
			for (const type of ['application/x-www-form-urlencoded', 'application/json', 'text/plain'])
				expect(
					isCrossSite(
						request(method, { origin: 'https://evil.example', 'content-type': type }),
						origin
					),
					`${method} ${type}`
				).toBe(true);
		expect(isCrossSite(request('POST', { origin: 'null' }), origin)).toBe(true);
	});

	it('refuses a form post without an Origin, whatever the parameters of its type', () => {
		for (const type of [
			'application/x-www-form-urlencoded',
			'multipart/form-data; boundary=x',
			'TEXT/PLAIN;charset=utf-8',
			'application/x-sveltekit-formdata'
		])
			expect(isCrossSite(request('POST', { 'content-type': type }), origin), type).toBe(true);
	});

	it('lets same-origin posts and JSON clients without an Origin through', () => {
		const form = 'application/x-www-form-urlencoded';
		expect(isCrossSite(request('POST', { origin, 'content-type': form }), origin)).toBe(false);
		expect(isCrossSite(request('POST', { 'content-type': 'application/json' }), origin)).toBe(
			false
		);
		expect(isCrossSite(request('DELETE'), origin)).toBe(false);
	});
});

describe('csrfRefusal', () => {
	it('answers the API in the contract’s shape', async () => {
		const r = csrfRefusal('/api/bookings');
		expect(r.status).toBe(403);
		expect(await r.json()).toEqual({ error: { code: 'csrf', message: CSRF_MESSAGE } });
	});

	it('answers a page with a short page', async () => {
		const r = csrfRefusal('/signin');
		expect(r.status).toBe(403);
		expect(r.headers.get('content-type')).toMatch(/^text\/html/);
		expect(await r.text()).toContain(CSRF_MESSAGE);
	});
});
