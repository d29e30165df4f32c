// Seeds the invented demo scenario of DESIGN.md. Idempotent: rows are matched by their
// natural keys (e-mail, group name). With SEED_ONLY_WHEN_EMPTY=1 it leaves a database
// that already has users alone, so `npm start` never undoes what people did in the demo.
import { eq, sql } from 'drizzle-orm';
import { connect, type Database } from '../src/lib/server/db/connect';
import { groupMemberships, researchGroups, users } from '../src/lib/server/db/schema';
import { seedBoxesAndBookings } from './seed-boxes';
import type { Role, UserStatus } from '../src/lib/server/db/users';
import { hashPassword } from '../src/lib/server/password';

export const DEMO_PASSWORD = 'demo-pass-2026';

type DemoUser = { email: string; name: string; role: Role; status?: UserStatus; group?: string };

const groups = [
	{ name: 'Organometallic Synthesis', costCentre: 'CC-4410-OMS', pi: 'pi@example.org' },
	{ name: 'Solid-State Batteries', costCentre: 'CC-4425-SSB', pi: 'a.brandt@example.org' },
	{ name: 'Photoredox Catalysis', costCentre: 'CC-4431-PRC', pi: 'f.ortmann@example.org' }
];

const people: DemoUser[] = [
	{ email: 'admin@example.org', name: 'Sam Adebayo-Lind', role: 'admin' },
	{ email: 'manager@example.org', name: 'Rhea Castellano', role: 'manager' },
	{
		email: 'trainer@example.org',
		name: 'Jonas Petrakis',
		role: 'trainer',
		group: 'Solid-State Batteries'
	},
	{
		email: 'pi@example.org',
		name: 'Ines Varga',
		role: 'member',
		group: 'Organometallic Synthesis'
	},
	{
		email: 'member@example.org',
		name: 'Lena Hoffer',
		role: 'member',
		group: 'Organometallic Synthesis'
	},
	{
		email: 'newcomer@example.org',
		name: 'Milo Strand',
		role: 'member',
		group: 'Photoredox Catalysis'
	},
	{
		email: 'a.brandt@example.org',
		name: 'Aiko Brandt',
		role: 'member',
		group: 'Solid-State Batteries'
	},
	{
		email: 'f.ortmann@example.org',
		name: 'Felix Ortmann',
		role: 'member',
		group: 'Photoredox Catalysis'
	},
	{
		email: 'k.osei@example.org',
		name: 'Kwame Osei',
		role: 'member',
		group: 'Solid-State Batteries'
	},
	{
		email: 'n.haddad@example.org',
		name: 'Noor Haddad',
		role: 'member',
		status: 'pending',
		group: 'Organometallic Synthesis'
	}
];

async function main() {
	const url = process.env.DATABASE_URL;
	if (!url) throw new Error('DATABASE_URL is not set');
	const { db, pool } = connect(url, 2);
	try {
		if (process.env.SEED_ONLY_WHEN_EMPTY === '1') {
			const [{ n }] = await db.select({ n: sql<number>`count(*)` }).from(users);
			if (Number(n) > 0) {
				console.log('[boxwright] demo data already present; seed skipped');
				return;
			}
		}
		const passwordHash = await hashPassword(DEMO_PASSWORD);
		const userIds = new Map<string, number>();
		for (const person of people) {
			const status = person.status ?? 'active';
			await db
				.insert(users)
				.values({ email: person.email, name: person.name, role: person.role, status, passwordHash })
				.onDuplicateKeyUpdate({
					set: { name: person.name, role: person.role, status, passwordHash }
				});
			const [row] = await db
				.select({ id: users.id })
				.from(users)
				.where(eq(users.email, person.email));
			userIds.set(person.email, row.id);
		}
		const groupIds = new Map<string, number>();
		for (const group of groups) {
			const values = {
				name: group.name,
				costCentre: group.costCentre,
				piUserId: userIds.get(group.pi)!
			};
			await db.insert(researchGroups).values(values).onDuplicateKeyUpdate({ set: values });
			const [row] = await db
				.select({ id: researchGroups.id })
				.from(researchGroups)
				.where(eq(researchGroups.name, group.name));
			groupIds.set(group.name, row.id);
		}
		for (const person of people) {
			if (!person.group) continue;
			const status = person.status === 'pending' ? 'pending' : 'active';
			const values = {
				groupId: groupIds.get(person.group)!,
				userId: userIds.get(person.email)!,
				status
			} as const;
			await db.insert(groupMemberships).values(values).onDuplicateKeyUpdate({ set: { status } });
		}
		const summary = await seedBoxesAndBookings(db as Database, userIds);
		console.log(
			`[boxwright] demo seeded: ${people.length} people in ${groups.length} groups; ${summary}`
		);
	} finally {
		await pool.end();
	}
}

await main();
