// The dashboard reads what it shows in a handful of SQL statements, whatever the role and
// however many boxes, ports, bookings and modules there are. The test app runs with
// COUNT_STATEMENTS=1 (scripts/test.mjs), so every answer says in X-Statements how many
// statements its request sent: the session check, the layout's shell and the page's loads.
// Before, one dashboard load sent 20 statements for a member and 28 for a manager (the boxes
// alone took eight: ports, modules, outages, readings, gloves, changes, damage reports).
import { afterAll, describe, expect, it } from 'vitest';
import { moduleTrainers, notifications } from '../../src/lib/server/db/schema';
import {
	certifiedMemberAndBox,
	certify,
	closeTestDb,
	fitGloves,
	makeBox,
	makeGroup,
	makeModule,
	makeUser,
	testDb
} from '../support/db';
import { signedIn, type Client } from '../support/http';
import { slot } from '../support/time';

afterAll(closeTestDb);

/** What each role's dashboard may send at most: what it sends now, plus one. */
const budget = { member: 7, trainer: 9, pi: 8, manager: 10 };

/** A signed-in GET of `path`: its status, its page, and the statements it sent. */
async function statementsOf(client: Client, path: string) {
	const response = await client.get(path);
	const header = response.headers.get('x-statements');
	if (header === null)
		throw new Error('no X-Statements header: run through `npm test` (COUNT_STATEMENTS=1)');
	return { status: response.status, page: await response.text(), statements: Number(header) };
}

async function dashboard(client: Client) {
	const answer = await statementsOf(client, '/');
	expect(answer.status).toBe(200);
	// The dashboard itself, not a redirect or an error page within budget.
	expect(answer.page).toContain('id="boxes-heading"');
	return answer;
}

describe('the dashboard in a handful of statements', () => {
	it('a member’s dashboard, shell and session included, stays within its budget', async () => {
		const { user, boxId } = await certifiedMemberAndBox();
		const member = await signedIn(user);
		const booked = await member.post('/api/bookings', { boxId, ...slot(2, 10), purpose: 'Count' });
		expect(booked.status).toBe(201);
		const { statements, page } = await dashboard(member);
		expect(page).toContain('Your next bookings');
		expect(statements).toBeGreaterThan(0);
		expect(statements).toBeLessThanOrEqual(budget.member);
	});

	it('reads no more statements with more boxes, ports, gloves, bookings and modules', async () => {
		const { user, boxId, moduleId } = await certifiedMemberAndBox();
		const member = await signedIn(user);
		const before = (await dashboard(member)).statements;

		// More of everything the page shows: each used to cost reads per box or per port.
		for (let n = 0; n < 3; n++) {
			const extra = await makeModule(`count-${n}`);
			const box = await makeBox({ modules: [moduleId, extra] });
			await fitGloves(box);
			await certify(user.id, extra);
		}
		await fitGloves(boxId);
		for (const day of [2, 3, 4]) {
			const r = await member.post('/api/bookings', { boxId, ...slot(day, 9), purpose: 'Count' });
			expect(r.status).toBe(201);
		}
		await testDb()
			.insert(notifications)
			.values(
				[1, 2, 3].map((n) => ({
					userId: user.id,
					kind: 'test',
					title: `Notice ${n}`,
					body: 'Count'
				}))
			);

		const after = await dashboard(member);
		expect(after.statements).toBe(before);
	});

	it('a trainer’s dashboard with training needs and requests stays within its budget', async () => {
		const moduleId = await makeModule('taught');
		const trainerUser = await makeUser('trainer');
		await testDb().insert(moduleTrainers).values({ moduleId, userId: trainerUser.id });
		// Someone whose certification in the taught module lapses soon, and a request to decide.
		const learner = await makeUser('member');
		await certify(
			learner.id,
			moduleId,
			new Date(Date.now() - 350 * 86_400_000),
			new Date(Date.now() + 5 * 86_400_000)
		);
		const asked = await (
			await signedIn(learner)
		).post('/api/training/requests', { moduleId, note: 'Renewal' });
		expect(asked.status).toBe(201);

		const { statements, page } = await dashboard(await signedIn(trainerUser));
		expect(page).toContain('Asking for training');
		expect(statements).toBeLessThanOrEqual(budget.trainer);
	});

	it('a PI’s dashboard with the month so far of their group stays within its budget', async () => {
		const group = await makeGroup('count');
		const { statements, page } = await dashboard(await signedIn(group.pi));
		expect(page).toContain(`aria-label="${group.name} this month"`);
		expect(statements).toBeLessThanOrEqual(budget.pi);
	});

	it('a manager’s dashboard, with upkeep, outbox and untaught modules, stays within its budget', async () => {
		const manager = await signedIn(await makeUser('manager'));
		const { statements } = await dashboard(manager);
		expect(statements).toBeLessThanOrEqual(budget.manager);
	});

	it('the shell every page shows is one statement beside the session check', async () => {
		for (const role of ['member', 'manager'] as const) {
			const client = await signedIn(await makeUser(role));
			// The calculators' page loads nothing of its own: what it sends is the layout's.
			const { status, statements } = await statementsOf(client, '/calc');
			expect(status).toBe(200);
			expect(statements).toBe(2);
		}
	});
});
