// Atmosphere readings and the box's atmosphere state.
// Every write takes the box row's lock first (lockBox, as bookings do), so the
// state follows the newest reading even when readings arrive at the same moment.
import { desc, eq } from 'drizzle-orm';
import {
	checkReading,
	describeReading,
	nextAtmosphereState,
	type Thresholds
} from '$lib/domain/atmosphere';
import type { AtmosphereState } from '$lib/domain/boxes';
import { db, type Transaction } from '../db';
import { atmosphereReadings, boxes } from '../db/schema';
import type { Actor } from './accounts';
import { audit } from './audit';
import { isDuplicateKey, ServiceError } from './errors';
import { notifyManagers } from './notifications';
import { transaction } from '../db/transaction';
import { lockBox } from '../db/locks';

type Source = 'manual' | 'check_in' | 'check_out' | 'csv';

export type ReadingInput = {
	at?: Date;
	o2Ppm: number;
	h2oPpm: number;
	source?: Source;
	bookingId?: number;
	note?: string | null;
};

/** A reading this far ahead of the server's clock is refused. */
const FUTURE_SLACK_MS = 5 * 60_000;

type LockedBox = Thresholds & { id: number; name: string; atmosphereState: AtmosphereState };

/**
 * Moves the box to the state its newest reading calls for; tells the managers when it goes
 * into alarm or comes out of it. Returns the state.
 */
async function settleState(
	tx: Transaction,
	box: LockedBox,
	actorId: number | null
): Promise<AtmosphereState> {
	const [newest] = await tx
		.select()
		.from(atmosphereReadings)
		.where(eq(atmosphereReadings.boxId, box.id))
		.orderBy(desc(atmosphereReadings.at))
		.limit(1);
	if (!newest) return box.atmosphereState;
	const next = nextAtmosphereState(box.atmosphereState, newest, box);
	if (next === box.atmosphereState) return next;
	await tx.update(boxes).set({ atmosphereState: next }).where(eq(boxes.id, box.id));
	await audit(tx, {
		actorId,
		action: 'box.atmosphere',
		entity: 'box',
		entityId: box.id,
		details: { from: box.atmosphereState, to: next, readingId: newest.id }
	});
	const link = `/boxes/${box.id}`;
	if (next === 'alarm') {
		await notifyManagers(
			`${box.name} is in atmosphere alarm`,
			`${describeReading(newest, box).join('; ')} (reading of ${newest.at.toISOString()}). ` +
				'New bookings of this box are refused until a reading is back under both warn levels.',
			link,
			`atmosphere-alarm:${box.id}:${newest.id}`,
			tx
		);
	} else if (box.atmosphereState === 'alarm') {
		await notifyManagers(
			`${box.name}: atmosphere alarm cleared`,
			`The newest reading is O₂ ${newest.o2Ppm} ppm, H₂O ${newest.h2oPpm} ppm; the box takes bookings again.`,
			link,
			`atmosphere-clear:${box.id}:${newest.id}`,
			tx
		);
	}
	return next;
}

function checkInstant(at: Date, now: Date) {
	if (at.getTime() > now.getTime() + FUTURE_SLACK_MS)
		throw new ServiceError(400, 'A reading cannot be in the future.', {
			fields: { at: 'The time is in the future.' }
		});
	if (at.getTime() < Date.UTC(2000, 0, 1))
		throw new ServiceError(400, 'That time is too far back.', {
			fields: { at: 'The time is before the year 2000.' }
		});
}

/** After a box's thresholds change: its state as the newest reading now calls for. */
export async function resettle(tx: Transaction, boxId: number, actorId: number) {
	return settleState(tx, await lockBox(tx, boxId), actorId);
}

/** Inserts one reading inside `tx`, whose box lock the caller holds. */
export async function insertReading(
	tx: Transaction,
	box: LockedBox,
	actorId: number,
	input: ReadingInput
) {
	const problems = checkReading(input);
	if (Object.keys(problems).length)
		throw new ServiceError(400, 'That reading is not valid.', { fields: problems });
	const now = new Date();
	// Readings are kept to the second; a reading taken "now" moves on a second if one
	// already holds this one.
	const at = new Date(Math.floor((input.at ?? now).getTime() / 1000) * 1000);
	checkInstant(at, now);
	const note = input.note?.trim() || null;
	for (let shift = 0; ; shift++) {
		const stamp = new Date(at.getTime() + shift * 1000);
		try {
			const [result] = await tx.insert(atmosphereReadings).values({
				boxId: box.id,
				at: stamp,
				o2Ppm: input.o2Ppm,
				h2oPpm: input.h2oPpm,
				source: input.source ?? 'manual',
				recordedBy: actorId,
				bookingId: input.bookingId ?? null,
				note
			});
			if (note) {
				await notifyManagers(
					`${box.name}: a problem noted with a reading`,
					`O₂ ${input.o2Ppm} ppm, H₂O ${input.h2oPpm} ppm. Note: ${note}`,
					`/boxes/${box.id}`,
					`reading-note:${result.insertId}`,
					tx
				);
			}
			return { id: result.insertId, at: stamp };
		} catch (e) {
			if (!isDuplicateKey(e)) throw e;
			if (input.at || shift >= 5)
				throw new ServiceError(409, 'This box already has a reading at that time.', {
					fields: { at: 'A reading at this second is already recorded.' }
				});
		}
	}
}

/** Runs `work` with the box locked, then settles the atmosphere state. */
export async function withReadings<T>(
	boxId: number,
	actorId: number,
	work: (tx: Transaction, box: LockedBox) => Promise<T>
): Promise<{ value: T; state: AtmosphereState }> {
	// The notices it may queue meet the outbox worker's locks; a deadlock victim runs again.
	return transaction(async (tx) => {
		const box = await lockBox(tx, boxId);
		const value = await work(tx, box);
		return { value, state: await settleState(tx, box, actorId) };
	});
}

export async function recordReading(actor: Actor, boxId: number, input: ReadingInput) {
	const { value, state } = await withReadings(boxId, actor.id, (tx, box) =>
		insertReading(tx, box, actor.id, input)
	);
	return { ...value, state };
}

/** The newest readings of a box, for its page. */
export async function latestReadings(boxId: number, limit = 10) {
	return db
		.select()
		.from(atmosphereReadings)
		.where(eq(atmosphereReadings.boxId, boxId))
		.orderBy(desc(atmosphereReadings.at))
		.limit(limit);
}
