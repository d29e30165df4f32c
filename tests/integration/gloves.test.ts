import { afterAll, describe, expect, it } from 'vitest';
import { and, eq, inArray } from 'drizzle-orm';
import { notifications, users } from '../../src/lib/server/db/schema';
import { closeTestDb, fitGloves, makeBox, makeUser, testDb } from '../support/db';
import { Client, errorOf, signedIn } from '../support/http';

afterAll(closeTestDb);

describe('glove damage reports', () => {
	const png = () =>
		new Blob([Buffer.from('89504e470d0a1a0a0000000d49484452', 'hex')], { type: 'image/png' });

	it('a hole of 10 mm or more is catastrophic: the steps show and the managers are told', async () => {
		const boxId = await makeBox();
		const [left] = await fitGloves(boxId);
		const member = await signedIn(await makeUser('member'));
		const body = new FormData();
		body.set('location', 'fingertip');
		body.set('hand', 'left');
		body.set('holeSizeMm', '12');
		body.set('photo', png(), 'hole.png');
		const r = await member.request('POST', `/boxes/${boxId}/ports/${left.id}/damage?/report`, body);
		expect(r.status).toBe(200);
		const text = await r.text();
		expect(text).toContain('Catastrophic failure');
		expect(text).toContain('supports, and does not replace');
		const managers = await testDb()
			.select({ id: users.id })
			.from(users)
			.where(inArray(users.role, ['manager', 'admin']));
		const told = await testDb()
			.select()
			.from(notifications)
			.where(
				and(
					inArray(
						notifications.userId,
						managers.map((m) => m.id)
					),
					eq(notifications.kind, 'staff_notice')
				)
			);
		expect(told.some((n) => n.body.includes('12 mm hole'))).toBe(true);
	});

	it('a small hole suggests a patch; a non-image or an oversized photo is refused', async () => {
		const boxId = await makeBox();
		const [left] = await fitGloves(boxId);
		const member = await signedIn(await makeUser('member'));
		const form = (photo?: Blob, size = '3') => {
			const f = new FormData();
			f.set('location', 'knuckle');
			f.set('hand', 'right');
			f.set('holeSizeMm', size);
			if (photo) f.set('photo', photo, 'photo.png');
			return f;
		};
		const small = await member.request(
			'POST',
			`/boxes/${boxId}/ports/${left.id}/damage?/report`,
			form()
		);
		expect(await small.text()).toContain('temporary patch');

		const fake = new Blob(['%PDF-1.4 not an image'], { type: 'image/png' });
		const notImage = await member.request(
			'POST',
			`/boxes/${boxId}/ports/${left.id}/damage?/report`,
			form(fake)
		);
		expect(notImage.status).toBe(400);
		expect(await notImage.text()).toContain('not a PNG, JPEG or WebP image');

		const big = new Blob(
			[Buffer.from('89504e470d0a1a0a', 'hex'), new Uint8Array(5 * 1024 * 1024)],
			{ type: 'image/png' }
		);
		const tooBig = await member.request(
			'POST',
			`/boxes/${boxId}/ports/${left.id}/damage?/report`,
			form(big)
		);
		expect(tooBig.status).toBe(400);
		expect(await tooBig.text()).toContain('larger than 5 MB');

		const negative = await member.request(
			'POST',
			`/boxes/${boxId}/ports/${left.id}/damage?/report`,
			form(undefined, '-2')
		);
		expect(negative.status).toBe(400);
	});
});

describe('POST /api/calc/flush', () => {
	it('answers the estimate (REFERENCES.md: 1 L of air into 1000 L → 209.25 ppm, exact mixing) and refuses impossible volumes', async () => {
		const client = await signedIn(await makeUser('member'));
		const r = await client.post('/api/calc/flush', {
			boxVolumeL: 1000,
			gloveVolumeL: 1,
			residualVolumeL: 0.1,
			cycles: 0
		});
		expect(r.status).toBe(200);
		const body = await r.json();
		expect(body.o2RiseInBoxPpm).toBeCloseTo(209.25, 1);
		expect(body.o2InGlovePpm).toBeCloseTo(209_460, -1);
		const bad = await client.post('/api/calc/flush', {
			boxVolumeL: -5,
			gloveVolumeL: 1,
			residualVolumeL: 2,
			cycles: 3
		});
		expect(bad.status).toBe(400);
		expect((await errorOf(bad)).code).toBe('invalid_input');
		expect(
			(
				await new Client().post('/api/calc/flush', {
					boxVolumeL: 1,
					gloveVolumeL: 1,
					residualVolumeL: 0,
					cycles: 1
				})
			).status
		).toBe(401);
	});
});
