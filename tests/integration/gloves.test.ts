import { afterAll, describe, expect, it } from 'vitest';
import { and, eq, inArray, isNull } from 'drizzle-orm';
import {
	bookings,
	gloveChanges,
	gloves,
	notifications,
	outages,
	users
} from '../../src/lib/server/db/schema';
import { closeTestDb, fitGloves, makeBox, makeUser, testDb } from '../support/db';
import { Client, errorOf, signedIn } from '../support/http';

afterAll(closeTestDb);

describe('guided glove change', () => {
	it('opens an outage, logs the steps, needs three cycles or an override, then fits the new glove and ends the outage', async () => {
		const boxId = await makeBox();
		const [left] = await fitGloves(boxId);
		const holder = await makeUser('member');
		const inProgress = new Date(Date.now() + 30 * 60_000);
		const [b] = await testDb()
			.insert(bookings)
			.values({
				boxId,
				userId: holder.id,
				startAt: inProgress,
				endAt: new Date(inProgress.getTime() + 3_600_000),
				blockedUntil: new Date(inProgress.getTime() + 3_600_000),
				purpose: 'x',
				status: 'confirmed'
			})
			.$returningId();

		const manager = await signedIn(await makeUser('manager'));
		const started = await manager.form(`/boxes/${boxId}?/gloveChange`, { portId: left.id });
		expect(started.status).toBe(303);
		const changeUrl = started.headers.get('location')!;
		const changeId = Number(changeUrl.split('/').pop());
		const [change] = await testDb()
			.select()
			.from(gloveChanges)
			.where(eq(gloveChanges.id, changeId));
		const [outage] = await testDb().select().from(outages).where(eq(outages.id, change.outageId));
		expect(outage.kind).toBe('glove_change');
		expect((outage.endAt.getTime() - outage.startAt.getTime()) / 3_600_000).toBeCloseTo(2, 1);
		const [cancelled] = await testDb().select().from(bookings).where(eq(bookings.id, b.id));
		expect(cancelled).toMatchObject({ status: 'cancelled', cancelCause: 'outage' });

		// A second change on the same port is refused while this one runs.
		expect((await manager.form(`/boxes/${boxId}?/gloveChange`, { portId: left.id })).status).toBe(
			409
		);

		for (const key of ['port_sealed', 'orings_off', 'old_glove_removed']) {
			expect((await manager.form(`${changeUrl}?/step`, { key })).status).toBe(200);
		}
		const fitted = await manager.form(`${changeUrl}?/fitted`, {
			material: 'butyl',
			thicknessMm: '0.4',
			size: '8',
			hand: 'right'
		});
		expect(fitted.status).toBe(200);
		const page = await (await manager.get(changeUrl)).text();
		// The change's page names the booking its outage cancelled.
		expect(page).toMatch(/cancelled: Test member/);
		expect(page).toContain(
			'This port is on the left, but the glove as fitted is a right-hand glove'
		);
		expect(page).toContain('supports, and does not replace');
		// Fix the hand by turning it inside out.
		await manager.form(`${changeUrl}?/fitted`, {
			material: 'butyl',
			thicknessMm: '0.4',
			size: '8',
			hand: 'right',
			turnedInsideOut: 'on'
		});

		await manager.form(`${changeUrl}?/step`, { key: 'flush_cycle' });
		await manager.form(`${changeUrl}?/step`, { key: 'flush_cycle' });
		const tooFew = await manager.form(`${changeUrl}?/complete`, { overrideNote: '' });
		expect(tooFew.status).toBe(422);
		expect(await tooFew.text()).toContain('at least 3 are needed');

		await manager.form(`${changeUrl}?/step`, { key: 'flush_cycle' });
		for (const key of ['orings_on', 'purge_started', 'cover_removed'])
			await manager.form(`${changeUrl}?/step`, { key });
		expect((await manager.form(`${changeUrl}?/complete`, {})).status).toBe(200);

		const [done] = await testDb().select().from(gloveChanges).where(eq(gloveChanges.id, changeId));
		expect(done.flushCycles).toBe(3);
		expect(done.steps.map((s) => s.key)).toEqual([
			'port_sealed',
			'orings_off',
			'old_glove_removed',
			'new_glove_fitted',
			'new_glove_fitted',
			'flush_cycle',
			'flush_cycle',
			'flush_cycle',
			'orings_on',
			'purge_started',
			'cover_removed'
		]);
		const onPort = await testDb()
			.select()
			.from(gloves)
			.where(and(eq(gloves.portId, left.id), isNull(gloves.removedAt)));
		expect(onPort).toHaveLength(1);
		expect(onPort[0]).toMatchObject({ id: done.newGloveId, hand: 'right', turnedInsideOut: true });
		const [ended] = await testDb().select().from(outages).where(eq(outages.id, change.outageId));
		expect(ended.endAt.getTime()).toBeLessThanOrEqual(Date.now() + 1000);
	});

	it('a written override lets a manager complete with fewer cycles; a port without a glove is refused', async () => {
		const boxId = await makeBox();
		const [left, right] = await fitGloves(boxId);
		await testDb().update(gloves).set({ removedAt: new Date() }).where(eq(gloves.portId, right.id));
		const manager = await signedIn(await makeUser('manager'));
		const none = await manager.form(`/boxes/${boxId}?/gloveChange`, { portId: right.id });
		expect(none.status).toBe(409);
		expect(await none.text()).toContain('no glove recorded');

		const started = await manager.form(`/boxes/${boxId}?/gloveChange`, { portId: left.id });
		const changeUrl = started.headers.get('location')!;
		await manager.form(`${changeUrl}?/fitted`, {
			material: 'neoprene',
			thicknessMm: '0.5',
			size: '9',
			hand: 'left'
		});
		await manager.form(`${changeUrl}?/step`, { key: 'flush_cycle' });
		const overridden = await manager.form(`${changeUrl}?/complete`, {
			overrideNote: 'Box about to be regenerated anyway; port stays closed.'
		});
		expect(overridden.status).toBe(200);

		const member = await signedIn(await makeUser('member'));
		expect((await member.get(changeUrl)).status).toBe(403);
		expect((await member.form(`/boxes/${boxId}?/gloveChange`, { portId: left.id })).status).toBe(
			403
		);
	});
});

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
