// Editing a box keeps its ports by id: their gloves, inspections and glove changes stay.
// A port is deleted only when it is taken off the list, after the form says what goes with
// it, and never while a glove change on it is under way.
import { afterAll, describe, expect, it } from 'vitest';
import { asc, eq, inArray } from 'drizzle-orm';
import { boxes, boxPorts, gloveInspections, gloves } from '../../src/lib/server/db/schema';
import { closeTestDb, fitGloves, makeBox, makeUser, testDb } from '../support/db';
import { Client, signedIn } from '../support/http';

afterAll(closeTestDb);

type PortField = { id?: number; position: string; diameterMm: number };

/** The box form as the browser posts it: every rule, and a row of three fields per port. */
async function saveBox(
	client: Client,
	boxId: number,
	ports: PortField[],
	extra: Record<string, string> = {}
) {
	const [box] = await testDb().select().from(boxes).where(eq(boxes.id, boxId));
	const form = new URLSearchParams({
		name: box.name,
		room: box.room,
		gas: box.gas,
		volumeL: String(box.volumeL),
		status: 'in_service',
		o2WarnPpm: '1',
		o2AlarmPpm: '10',
		h2oWarnPpm: '1',
		h2oAlarmPpm: '10',
		rateInternal: '0',
		rateExternal: '0',
		slotStepMin: '15',
		minLengthMin: '30',
		maxLengthMin: '240',
		horizonDays: '28',
		weeklyQuotaHours: '12',
		purgeMin: '30',
		cancelWindowHours: '24',
		noShowGraceMin: '15',
		requiredLeakClass: '3',
		...extra
	});
	for (const p of ports) {
		form.append('portId', p.id === undefined ? '' : String(p.id));
		form.append('portPosition', p.position);
		form.append('portDiameterMm', String(p.diameterMm));
	}
	return client.request('POST', `/manage/boxes/${boxId}`, form);
}

const portsOf = (boxId: number) =>
	testDb()
		.select()
		.from(boxPorts)
		.where(eq(boxPorts.boxId, boxId))
		.orderBy(asc(boxPorts.sortOrder), asc(boxPorts.id));

const glovesOn = (portIds: number[]) =>
	testDb().select().from(gloves).where(inArray(gloves.portId, portIds));

describe('editing a box', () => {
	it('keeps its gloves and their inspections, updates ports in place and adds new ones', async () => {
		const boxId = await makeBox();
		const [left, right] = await fitGloves(boxId);
		const fitted = await glovesOn([left.id, right.id]);
		await testDb()
			.insert(gloveInspections)
			.values({ gloveId: fitted[0].id, at: new Date(), damaged: false, action: 'none' });
		const manager = await signedIn(await makeUser('manager'));

		const saved = await saveBox(manager, boxId, [
			{ id: left.id, position: 'front-left', diameterMm: 220 },
			{ id: right.id, position: 'front-right', diameterMm: 200 },
			{ position: 'second-left', diameterMm: 150 }
		]);
		expect(saved.status, await saved.clone().text()).toBe(303);
		expect(saved.headers.get('location')).toBe(`/boxes/${boxId}`);

		const ports = await portsOf(boxId);
		expect(ports.map((p) => [p.position, p.diameterMm, p.sortOrder])).toEqual([
			['front-left', 220, 0],
			['front-right', 200, 1],
			['second-left', 150, 2]
		]);
		expect(ports.slice(0, 2).map((p) => p.id)).toEqual([left.id, right.id]);
		expect((await glovesOn([left.id, right.id])).map((g) => g.id).sort()).toEqual(
			fitted.map((g) => g.id).sort()
		);
		const inspections = await testDb()
			.select()
			.from(gloveInspections)
			.where(eq(gloveInspections.gloveId, fitted[0].id));
		expect(inspections).toHaveLength(1);

		// Saving again as it stands changes nothing and asks nothing.
		const again = await saveBox(
			manager,
			boxId,
			ports.map((p) => ({ id: p.id, position: p.position, diameterMm: p.diameterMm }))
		);
		expect(again.status).toBe(303);
		expect((await portsOf(boxId)).map((p) => p.id)).toEqual(ports.map((p) => p.id));
	});

	it('asks before removing a port, naming its glove, then removes only that one', async () => {
		const boxId = await makeBox();
		const [left, right] = await fitGloves(boxId);
		const manager = await signedIn(await makeUser('manager'));
		const keepRight = [{ id: right.id, position: 'front-right', diameterMm: 200 }];

		const asked = await saveBox(manager, boxId, keepRight);
		expect(asked.status).toBe(200);
		const page = await asked.text();
		expect(page).toContain('Remove a port?');
		expect(page).toContain('front-left port, with the glove fitted on it');
		expect(page).toContain('Yes, remove the port');
		expect((await portsOf(boxId)).map((p) => p.id)).toEqual([left.id, right.id]);

		const done = await saveBox(manager, boxId, keepRight, { confirmed: 'yes' });
		expect(done.status).toBe(303);
		expect((await portsOf(boxId)).map((p) => p.id)).toEqual([right.id]);
		expect(await glovesOn([left.id])).toEqual([]);
		expect(await glovesOn([right.id])).toHaveLength(1);
	});

	it('refuses to remove a port with a glove change under way, and a port of another box', async () => {
		const boxId = await makeBox();
		const [left, right] = await fitGloves(boxId);
		const manager = await signedIn(await makeUser('manager'));
		const started = await manager.post(`/api/boxes/${boxId}/glove-changes`, { portId: left.id });
		expect(started.status).toBe(201);

		const refused = await saveBox(
			manager,
			boxId,
			[{ id: right.id, position: 'front-right', diameterMm: 200 }],
			{ confirmed: 'yes' }
		);
		expect(refused.status).toBe(409);
		expect(await refused.text()).toContain(
			'A glove change is under way on the front-left port: complete or abandon it before removing the port.'
		);
		expect((await portsOf(boxId)).map((p) => p.id)).toEqual([left.id, right.id]);

		const other = await makeBox();
		const [foreign] = await portsOf(other);
		const stranger = await saveBox(manager, boxId, [
			{ id: left.id, position: 'front-left', diameterMm: 200 },
			{ id: right.id, position: 'front-right', diameterMm: 200 },
			{ id: foreign.id, position: 'front-left', diameterMm: 200 }
		]);
		expect(stranger.status).toBe(409);
		expect((await portsOf(other)).map((p) => p.boxId)).toEqual([other, other]);
	});

	it('a new box takes its ports from the form', async () => {
		const manager = await signedIn(await makeUser('manager'));
		const name = `Edit test ${Date.now().toString(36)}`;
		const form = new URLSearchParams({
			name,
			room: 'T1',
			gas: 'N2',
			volumeL: '800',
			o2WarnPpm: '1',
			o2AlarmPpm: '10',
			h2oWarnPpm: '1',
			h2oAlarmPpm: '10',
			rateInternal: '0',
			rateExternal: '0',
			slotStepMin: '15',
			minLengthMin: '30',
			maxLengthMin: '240',
			horizonDays: '28',
			weeklyQuotaHours: '12',
			purgeMin: '30'
		});
		for (const position of ['front-left', 'front-centre', 'front-right']) {
			form.append('portId', '');
			form.append('portPosition', position);
			form.append('portDiameterMm', '200');
		}
		const made = await manager.request('POST', '/manage/boxes/new', form);
		expect(made.status, await made.clone().text()).toBe(303);
		const [box] = await testDb().select().from(boxes).where(eq(boxes.name, name));
		expect((await portsOf(box.id)).map((p) => p.position)).toEqual([
			'front-left',
			'front-centre',
			'front-right'
		]);
	});
});
