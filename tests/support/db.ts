// Direct database access for integration tests: each test makes its own people.
import { randomBytes } from 'node:crypto';
import { eq } from 'drizzle-orm';
import { connect } from '../../src/lib/server/db/connect';
import {
	boxes,
	boxPorts,
	boxRequiredModules,
	certifications,
	gloves,
	groupMemberships,
	researchGroups,
	trainingModules,
	users
} from '../../src/lib/server/db/schema';
import type { Role } from '../../src/lib/domain/roles';
import { hashPassword } from '../../src/lib/server/password';

export const DEMO_PASSWORD = 'demo-pass-2026';
export const TEST_PASSWORD = 'test-password-2026';

let connection: ReturnType<typeof connect> | undefined;

export function testDb() {
	if (!process.env.DATABASE_URL) throw new Error('DATABASE_URL is not set; run `npm test`.');
	connection ??= connect(process.env.DATABASE_URL, 5);
	return connection.db;
}

export async function closeTestDb() {
	await connection?.pool.end();
	connection = undefined;
}

export function uniqueEmail(label: string): string {
	return `${label}-${Date.now().toString(36)}-${randomBytes(3).toString('hex')}@test.example`;
}

let testHash: Promise<string> | undefined;

/** An active user of the given role, optionally in a group (as PI when `pi`). */
export async function makeUser(
	role: Role,
	options: { group?: number; pi?: boolean; label?: string } = {}
) {
	testHash ??= hashPassword(TEST_PASSWORD);
	const db = testDb();
	const email = uniqueEmail(options.label ?? role);
	const [row] = await db
		.insert(users)
		.values({ email, name: `Test ${role}`, role, status: 'active', passwordHash: await testHash })
		.$returningId();
	if (options.group) {
		await db
			.insert(groupMemberships)
			.values({ groupId: options.group, userId: row.id, status: 'active' });
	}
	if (options.pi && options.group) {
		await db
			.update(researchGroups)
			.set({ piUserId: row.id })
			.where(eq(researchGroups.id, options.group));
	}
	return { id: row.id, email, password: TEST_PASSWORD };
}

/** A fresh group with its own PI, so tests never move the demo groups' PIs. */
export async function makeGroup(label = 'group') {
	const db = testDb();
	const name = `Test ${label} ${randomBytes(4).toString('hex')}`;
	const [row] = await db
		.insert(researchGroups)
		.values({ name, costCentre: 'CC-TEST' })
		.$returningId();
	const pi = await makeUser('member', { group: row.id, pi: true, label: 'pi' });
	return { id: row.id, name, pi };
}

export async function userIdByEmail(email: string): Promise<number> {
	const [row] = await testDb().select({ id: users.id }).from(users).where(eq(users.email, email));
	if (!row) throw new Error(`no user ${email}`);
	return row.id;
}

/** A training module of its own for one test. */
export async function makeModule(label = 'module', validityMonths = 12) {
	const [row] = await testDb()
		.insert(trainingModules)
		.values({ name: `Test ${label} ${randomBytes(4).toString('hex')}`, validityMonths })
		.$returningId();
	return row.id;
}

/** A box of its own for one test, with the design's default rules unless overridden. */
export async function makeBox(
	options: Partial<typeof boxes.$inferInsert> & { modules?: number[] } = {}
) {
	const { modules = [], ...values } = options;
	const db = testDb();
	const [row] = await db
		.insert(boxes)
		.values({
			name: `Test box ${randomBytes(4).toString('hex')}`,
			room: 'T0.01',
			gas: 'Ar',
			volumeL: 1000,
			...values
		})
		.$returningId();
	await db.insert(boxPorts).values([
		{ boxId: row.id, position: 'front-left', diameterMm: 200, sortOrder: 0 },
		{ boxId: row.id, position: 'front-right', diameterMm: 200, sortOrder: 1 }
	]);
	if (modules.length) {
		await db
			.insert(boxRequiredModules)
			.values(modules.map((moduleId) => ({ boxId: row.id, moduleId })));
	}
	return row.id;
}

export async function certify(
	userId: number,
	moduleId: number,
	grantedAt = new Date(Date.now() - 30 * 86_400_000),
	expiresAt = new Date(Date.now() + 300 * 86_400_000)
) {
	await testDb().insert(certifications).values({ userId, moduleId, grantedAt, expiresAt });
}

/** A member certified for a fresh box: the usual starting point of a booking test. */
export async function certifiedMemberAndBox(box: Partial<typeof boxes.$inferInsert> = {}) {
	const moduleId = await makeModule();
	const boxId = await makeBox({ ...box, modules: [moduleId] });
	const user = await makeUser('member');
	await certify(user.id, moduleId);
	return { user, boxId, moduleId };
}

/** A glove on each port of the box (as makeBox creates them: front-left, front-right). */
export async function fitGloves(boxId: number) {
	const db = testDb();
	const ports = await db.select().from(boxPorts).where(eq(boxPorts.boxId, boxId));
	for (const p of ports) {
		await db.insert(gloves).values({
			portId: p.id,
			material: 'butyl',
			thicknessMm: 0.4,
			size: '8',
			hand: p.position.endsWith('left') ? 'left' : 'right',
			installedAt: new Date(Date.now() - 60 * 86_400_000)
		});
	}
	return ports;
}
