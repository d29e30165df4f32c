// Direct database access for integration tests: each test makes its own people.
import { randomBytes } from 'node:crypto';
import { eq } from 'drizzle-orm';
import { connect } from '../../src/lib/server/db/connect';
import { groupMemberships, researchGroups, users } from '../../src/lib/server/db/schema';
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
