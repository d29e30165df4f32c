// The glove change over the API, as an outside client would drive it.
import { afterAll, describe, expect, it } from 'vitest';
import { and, eq, inArray, isNull } from 'drizzle-orm';
import {
	bookings,
	boxes,
	gloveChanges,
	gloveStock,
	gloves,
	notifications,
	outages,
	outbox
} from '../../src/lib/server/db/schema';
import { closeTestDb, fitGloves, makeBox, makeUser, testDb } from '../support/db';
import { Client, errorOf, signedIn } from '../support/http';

afterAll(closeTestDb);

const H = 3_600_000;
const at = (ms: number) => new Date(Date.now() + ms);

/** A confirmed booking of a fresh member on the box, held from `from` for `hours`. */
async function bookingOn(boxId: number, from: Date, hours = 1) {
	const holder = await makeUser('member');
	const end = new Date(from.getTime() + hours * H);
	const [row] = await testDb()
		.insert(bookings)
		.values({
			boxId,
			userId: holder.id,
			startAt: from,
			endAt: end,
			blockedUntil: end,
			purpose: 'synthesis',
			status: 'confirmed',
			confirmedAt: new Date()
		})
		.$returningId();
	return { id: row.id, holder };
}

const glove = (hand: string, extra: Record<string, unknown> = {}) => ({
	material: 'butyl',
	size: '8',
	thicknessMm: 0.4,
	hand,
	...extra
});

async function step(client: Client, changeId: number, body: Record<string, unknown>) {
	return client.post(`/api/glove-changes/${changeId}/steps`, body);
}

/** Records each step in turn and checks each is taken. */
async function steps(client: Client, changeId: number, keys: string[], fitted = glove('left')) {
	for (const key of keys) {
		const r = await step(
			client,
			changeId,
			key === 'new_glove_fitted' ? { step: key, glove: fitted } : { step: key }
		);
		expect(r.status, `${key}: ${r.status === 200 ? '' : await r.clone().text()}`).toBe(200);
	}
}

const upToFitting = ['port_sealed', 'orings_off', 'old_glove_removed', 'new_glove_fitted'];
const closing = ['orings_on', 'purge_started', 'cover_removed'];
const cycles = (n: number) => Array<string>(n).fill('flush_cycle');

async function start(client: Client, boxId: number, portId: number, extra = {}) {
	return client.post(`/api/boxes/${boxId}/glove-changes`, { portId, ...extra });
}

describe('a glove change takes over the planned outage', () => {
	it('previews and cancels two bookings once, runs in the one outage, and ends it at completion; the report counts only that time', async () => {
		const boxId = await makeBox();
		const [left] = await fitGloves(boxId);
		const manager = await signedIn(await makeUser('manager'));
		const first = await bookingOn(boxId, at(0.5 * H));
		const second = await bookingOn(boxId, at(2 * H));
		const window = { start: at(-1 * H).toISOString(), end: at(4 * H).toISOString() };

		const preview = await manager.post(`/api/boxes/${boxId}/outages/preview`, window);
		expect(preview.status).toBe(200);
		const previewed = (await preview.json()).bookings as { id: number; userName: string }[];
		expect(previewed.map((b) => b.id)).toEqual([first.id, second.id]);
		expect(previewed.map((b) => b.userName)).toEqual(['Test member', 'Test member']);
		// The preview changed nothing.
		const [still] = await testDb().select().from(bookings).where(eq(bookings.id, first.id));
		expect(still.status).toBe('confirmed');

		const planned = await manager.post(`/api/boxes/${boxId}/outages`, {
			...window,
			kind: 'glove_change',
			reason: 'Planned glove change, front-left'
		});
		expect(planned.status).toBe(201);
		const plannedBody = await planned.json();
		const outageId = plannedBody.outage.id as number;
		expect(plannedBody.cancelledBookingIds).toEqual([first.id, second.id]);

		// Each cancelled booking names its outage, over the API too.
		const own = await signedIn(first.holder);
		const seen = await own.get(`/api/bookings/${first.id}`);
		expect(seen.status).toBe(200);
		expect((await seen.json()).booking).toMatchObject({ status: 'cancelled', outageId });
		const stranger = await signedIn(await makeUser('member'));
		expect((await stranger.get(`/api/bookings/${first.id}`)).status).toBe(403);

		const started = await start(manager, boxId, left.id);
		expect(started.status).toBe(201);
		const change = await started.json();
		expect(change).toMatchObject({ outageId, cancelledBookingIds: [] });
		const boxOutages = await testDb().select().from(outages).where(eq(outages.boxId, boxId));
		expect(boxOutages).toHaveLength(1);

		// The box and its port say the port is sealed.
		const box = (await (await manager.get(`/api/boxes/${boxId}`)).json()).box;
		const port = box.ports.find((p: { id: number }) => p.id === left.id);
		expect(port).toMatchObject({ side: 'left', sealed: true, openChangeId: change.id });
		expect(port.glove).toMatchObject({ material: 'butyl', hand: 'left', state: 'sealed' });

		const view = await (await manager.get(`/api/glove-changes/${change.id}`)).json();
		expect(view.cancelledBookings.map((b: { id: number }) => b.id)).toEqual([first.id, second.id]);
		expect(view.nextSteps).toEqual(['port_sealed']);

		// Ending the outage is refused while the change on it is open.
		const endEarly = await manager.post(`/api/outages/${outageId}/end`, {});
		expect(endEarly.status).toBe(409);

		await steps(manager, change.id, [...upToFitting, ...cycles(5), ...closing]);
		const done = await manager.post(`/api/glove-changes/${change.id}/complete`, {});
		expect(done.status, await done.clone().text()).toBe(200);
		expect(await done.json()).toMatchObject({ status: 'completed', outageEnded: true });

		const [ended] = await testDb().select().from(outages).where(eq(outages.id, outageId));
		expect(ended.endAt.getTime()).toBeLessThanOrEqual(Date.now() + 1000);
		expect(ended.endAt.getTime()).toBeGreaterThan(Date.now() - 60_000);
		const onPort = await testDb()
			.select()
			.from(gloves)
			.where(and(eq(gloves.portId, left.id), isNull(gloves.removedAt)));
		expect(onPort).toHaveLength(1);
		expect(onPort[0].hand).toBe('left');

		// Each booking was cancelled once: one cancellation message each.
		const messages = await testDb()
			.select({ key: outbox.dedupeKey })
			.from(outbox)
			.where(
				inArray(outbox.dedupeKey, [
					`booking:${first.id}:cancelled:1`,
					`booking:${second.id}:cancelled:1`
				])
			);
		expect(messages).toHaveLength(2);

		// Reports count the hour the box was really out, not the five planned.
		const report = await (await manager.get('/reports?weeks=4')).text();
		const boxName = box.name as string;
		const hours = report.match(new RegExp(`${boxName}\\s*(?:<[^>]*>\\s*)*([\\d.]+) h`));
		expect(hours?.[1]).toBe('1.00');
	});

	it('opens its own outage when none is planned, and cancels what it covers', async () => {
		const boxId = await makeBox();
		const [, right] = await fitGloves(boxId);
		const manager = await signedIn(await makeUser('manager'));
		const held = await bookingOn(boxId, at(0.5 * H));
		const r = await start(manager, boxId, right.id, { expectedEnd: at(3 * H).toISOString() });
		expect(r.status).toBe(201);
		const body = await r.json();
		expect(body.cancelledBookingIds).toEqual([held.id]);
		const [outage] = await testDb().select().from(outages).where(eq(outages.id, body.outageId));
		expect(outage.kind).toBe('glove_change');
		const [b] = await testDb().select().from(bookings).where(eq(bookings.id, held.id));
		expect(b).toMatchObject({ status: 'cancelled', cancelCause: 'outage', outageId: outage.id });
	});
});

describe('the steps', () => {
	it('are refused out of order, unknown, skipped without a reason or with a glove of unknown size; the last can be undone', async () => {
		const boxId = await makeBox();
		const [left] = await fitGloves(boxId);
		const manager = await signedIn(await makeUser('manager'));
		const { id } = await (await start(manager, boxId, left.id)).json();

		const early = await step(manager, id, { step: 'flush_cycle' });
		expect(early.status).toBe(409);
		const err = await errorOf(early);
		expect(err.code).toBe('conflict');
		expect(err.details).toMatchObject({ code: 'step_out_of_order', nextSteps: ['port_sealed'] });

		const unknown = await step(manager, id, { step: 'polish_window' });
		expect(unknown.status).toBe(400);
		expect((await errorOf(unknown)).details?.fields).toHaveProperty('step');

		const blank = await step(manager, id, { step: 'port_sealed', skipReason: '   ' });
		expect(blank.status).toBe(400);
		expect((await errorOf(blank)).details?.fields).toHaveProperty('skipReason');

		const extra = await step(manager, id, { step: 'port_sealed', colour: 'red' });
		expect(extra.status).toBe(400);

		const skipped = await step(manager, id, {
			step: 'port_sealed',
			skipReason: 'Cover fitted by the night shift before the change was opened'
		});
		expect(skipped.status).toBe(200);
		const afterSkip = await skipped.json();
		expect(afterSkip.steps[0]).toMatchObject({
			key: 'port_sealed',
			skipReason: 'Cover fitted by the night shift before the change was opened'
		});
		expect(afterSkip.nextSteps).toEqual(['orings_off']);

		await steps(manager, id, ['orings_off', 'old_glove_removed']);
		const badSize = await step(manager, id, {
			step: 'new_glove_fitted',
			glove: glove('left', { size: 'XXL' })
		});
		expect(badSize.status).toBe(400);
		expect((await errorOf(badSize)).details?.fields).toHaveProperty(['glove.size']);
		const noGlove = await step(manager, id, { step: 'new_glove_fitted' });
		expect(noGlove.status).toBe(400);

		// Nothing was half-written by the refusals.
		const [row] = await testDb().select().from(gloveChanges).where(eq(gloveChanges.id, id));
		expect(row.steps.map((s) => s.key)).toEqual(['port_sealed', 'orings_off', 'old_glove_removed']);

		const undone = await manager.post(`/api/glove-changes/${id}/steps/undo`, {});
		expect(undone.status).toBe(200);
		expect((await undone.json()).nextSteps).toEqual(['old_glove_removed']);
	});

	it('a second start on the port is refused, and a port of another box is not found', async () => {
		const boxId = await makeBox();
		const other = await makeBox();
		const [left] = await fitGloves(boxId);
		const [otherLeft] = await fitGloves(other);
		const manager = await signedIn(await makeUser('manager'));
		expect((await start(manager, boxId, left.id)).status).toBe(201);
		const again = await start(manager, boxId, left.id);
		expect(again.status).toBe(409);
		expect((await errorOf(again)).code).toBe('conflict');
		const wrongBox = await start(manager, boxId, otherLeft.id);
		expect(wrongBox.status).toBe(404);
		expect((await errorOf(wrongBox)).code).toBe('not_found');
		expect((await manager.get('/api/glove-changes/99999999')).status).toBe(404);
	});

	it('members and trainers are refused every write, and cannot read a change', async () => {
		const boxId = await makeBox();
		const [left] = await fitGloves(boxId);
		const manager = await signedIn(await makeUser('manager'));
		const { id, outageId } = await (await start(manager, boxId, left.id)).json();
		for (const role of ['member', 'trainer'] as const) {
			const c = await signedIn(await makeUser(role));
			const calls = [
				c.post(`/api/boxes/${boxId}/glove-changes`, { portId: left.id }),
				c.post(`/api/glove-changes/${id}/steps`, { step: 'port_sealed' }),
				c.post(`/api/glove-changes/${id}/steps/undo`, {}),
				c.post(`/api/glove-changes/${id}/complete`, {}),
				c.post(`/api/glove-changes/${id}/abandon`, { reason: 'not mine to abandon' }),
				c.post(`/api/outages/${outageId}/end`, {}),
				c.post(`/api/boxes/${boxId}/outages/preview`, {
					start: new Date().toISOString(),
					end: at(H).toISOString()
				}),
				c.get(`/api/glove-changes/${id}`)
			];
			for (const r of await Promise.all(calls)) {
				expect(r.status).toBe(403);
				expect((await errorOf(r)).code).toBe('forbidden');
			}
			// Anyone signed in may read the box and its ports.
			expect((await c.get(`/api/boxes/${boxId}`)).status).toBe(200);
		}
	});
});

describe('completion', () => {
	it('is refused with every reason that applies, then succeeds once each is dealt with', async () => {
		const boxId = await makeBox({ gloveChangeNeedsProof: true, o2AlarmPpm: 10, o2WarnPpm: 1 });
		const [left] = await fitGloves(boxId);
		const manager = await signedIn(await makeUser('manager'));
		const { id } = await (await start(manager, boxId, left.id)).json();
		// A right-hand glove on the left port, and one flush cycle only.
		await steps(manager, id, [...upToFitting, 'flush_cycle'], glove('right'));

		const refused = await manager.post(`/api/glove-changes/${id}/complete`, {});
		expect(refused.status).toBe(422);
		const err = await errorOf(refused);
		expect(err.code).toBe('rule_refused');
		const codes = (err.details?.reasons as { code: string }[]).map((r) => r.code);
		expect(codes).toEqual([
			'steps_missing',
			'too_few_cycles',
			'hand_mismatch',
			'release_check_missing',
			'opening_above_alarm'
		]);
		// The page's state lists the same blockers.
		const view = await (await manager.get(`/api/glove-changes/${id}`)).json();
		expect(view.blockers.map((b: { code: string }) => b.code)).toEqual(codes);
		expect(view.flush.rows.map((r: { cycles: number }) => r.cycles)).toEqual([1, 3, 5]);

		await steps(manager, id, [...cycles(4), ...closing]);
		const left2 = await errorOf(await manager.post(`/api/glove-changes/${id}/complete`, {}));
		expect((left2.details?.reasons as { code: string }[]).map((r) => r.code)).toEqual([
			'hand_mismatch',
			'release_check_missing'
		]);

		const reading = await manager.post(`/api/boxes/${boxId}/readings`, { o2Ppm: 0.4, h2oPpm: 0.3 });
		expect(reading.status).toBe(201);
		const handOnly = await errorOf(await manager.post(`/api/glove-changes/${id}/complete`, {}));
		expect((handOnly.details?.reasons as { code: string }[]).map((r) => r.code)).toEqual([
			'hand_mismatch'
		]);
		const done = await manager.post(`/api/glove-changes/${id}/complete`, { confirmHand: true });
		expect(done.status).toBe(200);

		const again = await manager.post(`/api/glove-changes/${id}/complete`, { confirmHand: true });
		expect(again.status).toBe(409);
		expect((await step(manager, id, { step: 'flush_cycle' })).status).toBe(409);
	});

	it('takes fewer than three cycles only with a written override', async () => {
		const boxId = await makeBox();
		const [left] = await fitGloves(boxId);
		const manager = await signedIn(await makeUser('manager'));
		const { id } = await (await start(manager, boxId, left.id)).json();
		await steps(manager, id, [...upToFitting, ...cycles(2), ...closing]);
		const refused = await errorOf(
			await manager.post(`/api/glove-changes/${id}/complete`, { overrideReason: '  ' })
		);
		expect((refused.details?.reasons as { code: string }[]).map((r) => r.code)).toEqual([
			'too_few_cycles'
		]);
		const done = await manager.post(`/api/glove-changes/${id}/complete`, {
			overrideReason:
				'Two long cycles with the glove fully collapsed; O2 read 0.3 ppm after opening.'
		});
		expect(done.status).toBe(200);
		const [row] = await testDb().select().from(gloveChanges).where(eq(gloveChanges.id, id));
		expect(row.overrideNote).toContain('Two long cycles');
	});
});

describe('abandoning a change', () => {
	it('needs a reason, leaves the port sealed and the box out of service until a manager ends the outage', async () => {
		const boxId = await makeBox();
		const [left] = await fitGloves(boxId);
		const manager = await signedIn(await makeUser('manager'));
		const { id, outageId } = await (await start(manager, boxId, left.id)).json();
		await steps(manager, id, ['port_sealed', 'orings_off', 'old_glove_removed']);

		const blank = await manager.post(`/api/glove-changes/${id}/abandon`, { reason: '' });
		expect(blank.status).toBe(400);
		const r = await manager.post(`/api/glove-changes/${id}/abandon`, {
			reason: 'No spare of the right size; ordered'
		});
		expect(r.status).toBe(200);
		expect((await r.json()).status).toBe('abandoned');

		const box = (await (await manager.get(`/api/boxes/${boxId}`)).json()).box;
		expect(box.condition).toBe('out_of_service');
		const port = box.ports.find((p: { id: number }) => p.id === left.id);
		expect(port).toMatchObject({ sealed: true, glove: null });

		const completeAbandoned = await manager.post(`/api/glove-changes/${id}/complete`, {});
		expect(completeAbandoned.status).toBe(409);

		const ended = await manager.post(`/api/outages/${outageId}/end`, {});
		expect(ended.status).toBe(200);
		const [outage] = await testDb().select().from(outages).where(eq(outages.id, outageId));
		expect(outage.endAt.getTime()).toBeLessThanOrEqual(Date.now() + 1000);
		// A new change can start on the sealed port.
		expect((await start(manager, boxId, left.id)).status).toBe(201);
	});
});

describe('two managers at once', () => {
	it('one start wins, the other is a 409, and no booking is cancelled twice', async () => {
		const boxId = await makeBox();
		const [left] = await fitGloves(boxId);
		const held = await bookingOn(boxId, at(0.5 * H));
		const [a, b] = await Promise.all([
			signedIn(await makeUser('manager')),
			signedIn(await makeUser('manager'))
		]);
		const answers = await Promise.all([start(a, boxId, left.id), start(b, boxId, left.id)]);
		expect(answers.map((r) => r.status).sort()).toEqual([201, 409]);
		const [row] = await testDb().select().from(bookings).where(eq(bookings.id, held.id));
		expect(row.sequence).toBe(1);
		const boxOutages = await testDb().select().from(outages).where(eq(outages.boxId, boxId));
		expect(boxOutages).toHaveLength(1);
		const sent = await testDb()
			.select({ id: outbox.id })
			.from(outbox)
			.where(eq(outbox.dedupeKey, `booking:${held.id}:cancelled:1`));
		expect(sent).toHaveLength(1);
	});
});

describe('spare gloves', () => {
	it('fitting from stock takes one, telling the managers at the minimum; undoing puts it back', async () => {
		const boxId = await makeBox();
		const [left] = await fitGloves(boxId);
		const me = await makeUser('manager');
		const manager = await signedIn(me);
		// A thickness neither the demo nor another test stocks, so the kind is this test's own.
		const thicknessMm = 1.23;
		const [kind] = await testDb()
			.insert(gloveStock)
			.values({
				material: 'butyl',
				size: '8',
				thicknessMm,
				hand: 'left',
				quantity: 2,
				minQuantity: 1
			})
			.$returningId();
		const { id } = await (await start(manager, boxId, left.id)).json();
		await steps(manager, id, ['port_sealed', 'orings_off', 'old_glove_removed']);

		const wrong = await step(manager, id, {
			step: 'new_glove_fitted',
			glove: glove('right', { thicknessMm, stockId: kind.id })
		});
		expect(wrong.status).toBe(400);

		const fitted = await step(manager, id, {
			step: 'new_glove_fitted',
			glove: glove('left', { thicknessMm, stockId: kind.id })
		});
		expect(fitted.status).toBe(200);
		const count = async () =>
			(await testDb().select().from(gloveStock).where(eq(gloveStock.id, kind.id)))[0].quantity;
		expect(await count()).toBe(1);
		const told = await testDb()
			.select()
			.from(notifications)
			.where(and(eq(notifications.userId, me.id), eq(notifications.kind, 'staff_notice')));
		expect(
			told.some((n) => n.title.startsWith('Spare gloves low') && n.body.startsWith('1 left'))
		).toBe(true);

		await manager.post(`/api/glove-changes/${id}/steps/undo`, {});
		expect(await count()).toBe(2);
	});
});

describe('damage reports', () => {
	it('a small hole tells the managers too, with a link to the port', async () => {
		const boxId = await makeBox();
		const [left] = await fitGloves(boxId);
		const member = await signedIn(await makeUser('member'));
		const body = new FormData();
		body.set('location', 'fingertip');
		body.set('hand', 'left');
		body.set('holeSizeMm', '2');
		const r = await member.request('POST', `/boxes/${boxId}/ports/${left.id}/damage?/report`, body);
		expect(r.status).toBe(200);
		expect(await r.text()).toContain('managers have been told');
		const notices = await testDb()
			.select()
			.from(notifications)
			.where(eq(notifications.link, `/boxes/${boxId}/ports/${left.id}`));
		expect(notices.length).toBeGreaterThan(0);
		expect(notices[0].body).toContain('2 mm hole (fingertip, left hand)');
		// The e-mail goes with the notice: one per manager told, about this box's port.
		const [{ name }] = await testDb()
			.select({ name: boxes.name })
			.from(boxes)
			.where(eq(boxes.id, boxId));
		const mails = await testDb()
			.select({ id: outbox.id })
			.from(outbox)
			.where(
				and(
					eq(outbox.kind, 'staff_notice'),
					eq(outbox.subject, `Glove damage on ${name}, front-left port`)
				)
			);
		expect(mails.length).toBeGreaterThan(0);
		expect(mails).toHaveLength(notices.length);
	});
});
