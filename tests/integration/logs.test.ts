// The request id of the structured logs: taken from a well-formed X-Request-Id or made
// anew, answered in the X-Request-Id header, and stored on the outbox rows the request
// queues. (The log lines themselves, and what they never contain, are
// src/lib/server/observability.spec.ts: the test app logs at warn.)
import { afterAll, describe, expect, it } from 'vitest';
import { randomBytes } from 'node:crypto';
import { eq } from 'drizzle-orm';
import { outbox } from '../../src/lib/server/db/schema';
import { certifiedMemberAndBox, closeTestDb, testDb } from '../support/db';
import { Client, signedIn } from '../support/http';
import { slot } from '../support/time';

afterAll(closeTestDb);

const uuid = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/;
const freshId = () => `test-${randomBytes(8).toString('hex')}`;

describe('X-Request-Id', () => {
	const client = new Client();

	it('echoes a well-formed incoming id, on pages, API answers and refusals alike', async () => {
		for (const [path, status] of [
			['/api/health', 200],
			['/signin', 200],
			['/api/me', 401],
			['/api/no-such-route', 404]
		] as const) {
			const id = freshId();
			const r = await client.request('GET', path, undefined, { 'x-request-id': id });
			expect(r.status, path).toBe(status);
			expect(r.headers.get('x-request-id'), path).toBe(id);
		}
	});

	it('gives every request its own UUID when none, or a malformed one, comes in', async () => {
		const a = await client.get('/api/health');
		const b = await client.get('/api/health');
		expect(a.headers.get('x-request-id')).toMatch(uuid);
		expect(b.headers.get('x-request-id')).toMatch(uuid);
		expect(a.headers.get('x-request-id')).not.toBe(b.headers.get('x-request-id'));
		for (const bad of ['short', 'x'.repeat(37), 'has spaces in it', 'quote"and{brace}']) {
			const r = await client.request('GET', '/api/health', undefined, { 'x-request-id': bad });
			expect(r.headers.get('x-request-id'), bad).toMatch(uuid);
		}
	});

	it('reaches the outbox rows the request queues', async () => {
		const { user, boxId } = await certifiedMemberAndBox();
		const member = await signedIn(user);
		const id = freshId();
		const { start, end } = slot(5, 11, 60);
		const r = await member.request(
			'POST',
			'/api/bookings',
			{ boxId, start, end, purpose: 'Traced' },
			{ 'x-request-id': id }
		);
		expect(r.status).toBe(201);
		expect(r.headers.get('x-request-id')).toBe(id);
		const { booking } = await r.json();
		// The confirmation queued in the booking's transaction carries the request's id.
		const [mail] = await testDb()
			.select({ requestId: outbox.requestId })
			.from(outbox)
			.where(eq(outbox.dedupeKey, `booking:${booking.id}:confirmed:0`));
		expect(mail.requestId).toBe(id);

		// A request without an id of its own stores the one it was given.
		const other = await member.post('/api/bookings', {
			boxId,
			...slot(5, 14, 60),
			purpose: 'Traced too'
		});
		expect(other.status).toBe(201);
		const given = other.headers.get('x-request-id');
		expect(given).toMatch(uuid);
		const [second] = await testDb()
			.select({ requestId: outbox.requestId })
			.from(outbox)
			.where(eq(outbox.dedupeKey, `booking:${(await other.json()).booking.id}:confirmed:0`));
		expect(second.requestId).toBe(given);
	});
});
