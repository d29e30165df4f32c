// Leak tests saved against a box, with their inputs, result, class and pass/fail.
import { and, desc, eq, gte, lt } from 'drizzle-orm';
import {
	checkGaugeInput,
	checkOxygenInput,
	checkPressureInput,
	isoClass,
	leakRateByOxygen,
	leakRateByPressure,
	meetsClass,
	pressureInputFromGauge,
	type GaugeInput,
	type IsoClass,
	type OxygenInput,
	type PressureInput
} from '$lib/domain/leak';
import { hasRole } from '$lib/domain/roles';
import { db, type Transaction } from '../db';
import type { Database } from '../db/connect';
import { atmosphereReadings, boxes, leakTests, users } from '../db/schema';
import type { Actor } from './accounts';
import { audit } from './audit';
import { forbidden, notFound, ServiceError } from './errors';
import { transaction } from '../db/transaction';

export type LeakTestInput =
	| ({ method: 'oxygen' } & OxygenInput)
	| ({ method: 'pressure' } & PressureInput)
	| ({ method: 'gauge' } & GaugeInput);

/** Field name → message, from the domain's "field message" problems. */
const asFields = (problems: string[]) =>
	Object.fromEntries(problems.map((p) => [p.split(' ')[0], p]));

/** The hourly leak rate and the inputs worth keeping, or a 400 naming the bad fields. */
export function evaluate(input: LeakTestInput): {
	method: 'oxygen' | 'pressure';
	rate: number;
	inputs: Record<string, number>;
} {
	if (input.method === 'oxygen') {
		const problems = checkOxygenInput(input);
		if (problems.length)
			throw new ServiceError(400, 'Those readings cannot be.', { fields: asFields(problems) });
		return {
			method: 'oxygen' as const,
			rate: leakRateByOxygen(input),
			inputs: { o2RisePpm: input.o2RisePpm, minutes: input.minutes }
		};
	}
	const gauge = input.method === 'gauge' ? input : null;
	if (gauge) {
		const problems = checkGaugeInput(gauge);
		if (problems.length)
			throw new ServiceError(400, 'Those readings cannot be.', { fields: asFields(problems) });
	}
	const absolute: PressureInput = gauge ? pressureInputFromGauge(gauge) : (input as PressureInput);
	const problems = checkPressureInput(absolute);
	if (problems.length)
		throw new ServiceError(400, 'Those readings cannot be.', { fields: asFields(problems) });
	const { p1Pa, p2Pa, t1K, t2K, hours } = absolute;
	return {
		method: 'pressure' as const,
		rate: leakRateByPressure(absolute),
		inputs: {
			p1Pa,
			p2Pa,
			t1K,
			t2K,
			hours,
			...(gauge && {
				gauge1Pa: gauge.gauge1Pa,
				gauge2Pa: gauge.gauge2Pa,
				barometric1Pa: gauge.barometric1Pa,
				barometric2Pa: gauge.barometric2Pa
			})
		}
	};
}

export async function recordLeakTest(
	actor: Actor,
	boxId: number,
	input: LeakTestInput & { note?: string | null },
	now = new Date()
) {
	if (!hasRole(actor.role, 'manager')) throw forbidden('Only a manager records leak tests.');
	const result = evaluate(input);
	return transaction(async (tx) => {
		const [box] = await tx
			.select({ id: boxes.id, requiredLeakClass: boxes.requiredLeakClass })
			.from(boxes)
			.where(eq(boxes.id, boxId));
		if (!box) throw notFound('The box');
		const required = box.requiredLeakClass as IsoClass;
		const row = {
			boxId,
			method: result.method,
			inputs: result.inputs,
			hourlyLeakRate: result.rate,
			isoClass: isoClass(result.rate),
			requiredClass: required,
			passed: meetsClass(result.rate, required),
			note: input.note?.trim() || null,
			testedAt: now,
			testedBy: actor.id
		};
		const [{ id }] = await tx.insert(leakTests).values(row).$returningId();
		await audit(tx, {
			actorId: actor.id,
			action: 'leak_test.recorded',
			entity: 'box',
			entityId: boxId,
			details: { leakTestId: id, rate: result.rate, isoClass: row.isoClass, passed: row.passed }
		});
		return { id, ...row };
	});
}

export async function leakTestsOf(boxId: number, limit = 50) {
	return db
		.select({
			id: leakTests.id,
			method: leakTests.method,
			inputs: leakTests.inputs,
			hourlyLeakRate: leakTests.hourlyLeakRate,
			isoClass: leakTests.isoClass,
			requiredClass: leakTests.requiredClass,
			passed: leakTests.passed,
			note: leakTests.note,
			testedAt: leakTests.testedAt,
			testedBy: users.name
		})
		.from(leakTests)
		.leftJoin(users, eq(users.id, leakTests.testedBy))
		.where(eq(leakTests.boxId, boxId))
		.orderBy(desc(leakTests.testedAt), desc(leakTests.id))
		.limit(limit);
}

/**
 * A box's release check after a glove change: whether the box asks for one
 * (`glove_change_needs_proof`) and whether it is met — a passing leak test or a reading
 * under both warn levels recorded at or after `since` (the last flush cycle).
 */
export async function releaseCheck(
	q: Database | Transaction,
	boxId: number,
	since: Date
): Promise<{ needed: boolean; met: boolean }> {
	const [box] = await q
		.select({
			needsProof: boxes.gloveChangeNeedsProof,
			o2WarnPpm: boxes.o2WarnPpm,
			h2oWarnPpm: boxes.h2oWarnPpm
		})
		.from(boxes)
		.where(eq(boxes.id, boxId));
	if (!box?.needsProof) return { needed: false, met: true };
	// To the second, as the tests and readings it is compared with are stored.
	const from = new Date(Math.floor(since.getTime() / 1000) * 1000);
	const [[test], [reading]] = await Promise.all([
		q
			.select({ id: leakTests.id })
			.from(leakTests)
			.where(
				and(eq(leakTests.boxId, boxId), eq(leakTests.passed, true), gte(leakTests.testedAt, from))
			)
			.limit(1),
		// In spec: under both warn levels (domain/atmosphere.ts, inSpec), asked of the database.
		q
			.select({ id: atmosphereReadings.id })
			.from(atmosphereReadings)
			.where(
				and(
					eq(atmosphereReadings.boxId, boxId),
					gte(atmosphereReadings.at, from),
					lt(atmosphereReadings.o2Ppm, box.o2WarnPpm),
					lt(atmosphereReadings.h2oPpm, box.h2oWarnPpm)
				)
			)
			.limit(1)
	]);
	return { needed: true, met: Boolean(test || reading) };
}
