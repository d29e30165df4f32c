// Leak tests saved against a box, with their inputs, result, class and pass/fail. What a test
// amounts to is decided in domain/leak.ts; this module fetches the box's class and stores.
import { and, count, desc, eq, gte, lt } from 'drizzle-orm';
import { fieldMessages } from '$lib/domain/inputs';
import { checkLeakTest, judgeLeakTest, type IsoClass, type LeakTestInput } from '$lib/domain/leak';
import type { ListQuery, ListSpec } from '$lib/domain/listing';
import { hasRole } from '$lib/domain/roles';
import { leakMethods, type LeakMethod } from '$lib/domain/upkeep';
import { db, type Transaction } from '../db';
import type { Database } from '../db/connect';
import { atmosphereReadings, boxes, leakTests, users } from '../db/schema';
import type { Actor } from './accounts';
import { audit } from './audit';
import { forbidden, notFound, ServiceError } from './errors';
import { transaction } from '../db/transaction';
import { orderOf, pageInSql } from '../listing';

export type { LeakTestInput };

export async function recordLeakTest(
	actor: Actor,
	boxId: number,
	input: LeakTestInput & { note?: string | null },
	now = new Date()
) {
	if (!hasRole(actor.role, 'manager')) throw forbidden('Only a manager records leak tests.');
	const problems = checkLeakTest(input);
	if (problems.length)
		throw new ServiceError(400, 'Those readings cannot be.', { fields: fieldMessages(problems) });
	return transaction(async (tx) => {
		const [box] = await tx
			.select({ id: boxes.id, requiredLeakClass: boxes.requiredLeakClass })
			.from(boxes)
			.where(eq(boxes.id, boxId));
		if (!box) throw notFound('The box');
		const result = judgeLeakTest(input, box.requiredLeakClass as IsoClass);
		const row = {
			boxId,
			method: result.method,
			inputs: result.inputs,
			hourlyLeakRate: result.hourlyLeakRate,
			isoClass: result.isoClass,
			requiredClass: result.requiredClass,
			passed: result.passed,
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
			details: {
				leakTestId: id,
				rate: result.hourlyLeakRate,
				isoClass: row.isoClass,
				passed: row.passed
			}
		});
		return { id, ...row };
	});
}

const leakTestColumns = {
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
};

/** A box's leak tests for the API, newest first. */
export async function leakTestsOf(boxId: number, limit = 50) {
	return db
		.select(leakTestColumns)
		.from(leakTests)
		.leftJoin(users, eq(users.id, leakTests.testedBy))
		.where(eq(leakTests.boxId, boxId))
		.orderBy(desc(leakTests.testedAt), desc(leakTests.id))
		.limit(limit);
}

/** The box's leak-test history as a person pages through it. */
export const leakTestList = {
	sorts: ['when', 'rate', 'result'],
	defaultSort: 'when',
	defaultDir: 'desc',
	filters: { result: ['pass', 'fail'], method: leakMethods },
	perPage: 25
} as const satisfies ListSpec;

/** One page of a box's leak tests with the total: by date, rate or result; passed or failed. */
export async function leakTestPage(
	boxId: number,
	query: ListQuery<(typeof leakTestList.sorts)[number], 'result' | 'method'>
) {
	const { result, method } = query.filters;
	const where = and(
		eq(leakTests.boxId, boxId),
		result ? eq(leakTests.passed, result === 'pass') : undefined,
		method ? eq(leakTests.method, method as LeakMethod) : undefined
	);
	return pageInSql(
		query,
		async () => (await db.select({ n: count() }).from(leakTests).where(where))[0].n,
		(limit, offset) =>
			db
				.select(leakTestColumns)
				.from(leakTests)
				.leftJoin(users, eq(users.id, leakTests.testedBy))
				.where(where)
				.orderBy(
					...orderOf(
						query,
						{
							when: leakTests.testedAt,
							rate: leakTests.hourlyLeakRate,
							result: leakTests.passed
						},
						leakTests.id
					)
				)
				.limit(limit)
				.offset(offset)
	);
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
