import { describe, expect, it, vi } from 'vitest';
import { errorResponse, shapeApiError } from './http';
import { respond } from './api';
import { ServiceError } from './errors';

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

describe('refusals answered once (api.ts respond)', () => {
	it('passes a refusal built by errorResponse on as the same object: no copy, no second parse', async () => {
		const refusal = errorResponse(409, 'Someone else holds that time on the box.', 'conflict', {
			reasons: []
		});
		const clone = vi.spyOn(refusal, 'clone');
		expect(await shapeApiError(refusal)).toBe(refusal);
		expect(clone).not.toHaveBeenCalled();
		expect(await refusal.json()).toEqual({
			error: {
				code: 'conflict',
				message: 'Someone else holds that time on the box.',
				details: { reasons: [] }
			}
		});
	});

	it('answers a ServiceError in the contract’s shape, its code from the status unless it names one', async () => {
		const refused = await respond(
			async () => {
				throw new ServiceError(422, 'The booking breaks the box’s rules.', { reasons: [] });
			},
			() => new Response(null)
		);
		expect(refused.status).toBe(422);
		expect(await refused.json()).toEqual({
			error: {
				code: 'rule_refused',
				message: 'The booking breaks the box’s rules.',
				details: { reasons: [] }
			}
		});
		const made = await respond(
			async () => 7,
			(n) => new Response(String(n), { status: 201 })
		);
		expect([made.status, await made.text()]).toEqual([201, '7']);
	});

	it('a ServiceError carries no stack: a refusal is an answer, not a fault', () => {
		const error = new ServiceError(409, 'Taken.');
		expect(error.stack?.split('\n').filter((line) => line.trim().startsWith('at '))).toEqual([]);
		// Errors elsewhere keep theirs.
		expect(new Error('fault').stack).toMatch(/\n\s+at /);
	});
});
