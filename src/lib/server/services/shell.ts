// What the shell shows a signed-in person on every page, read in one statement: whether they
// lead a group, their unread notices, the registrations and bookings waiting for them, and
// the booking that wants a check-in or check-out now. Each count is the query of the service
// that owns it, sent here as a scalar subquery; the check-in candidates are joined to the
// one row of counts, so a person with none still gets their counts.
import { asc, eq, exists, sql, type SQLWrapper } from 'drizzle-orm';
import { hasRole, type Role } from '$lib/domain/roles';
import { db } from '../db';
import { users } from '../db/schema';
import { ledByQuery, pendingForQuery } from './accounts';
import { pendingBookingsQuery } from './calendar';
import { checkCandidates, promptOf } from './checkins';
import { unreadQuery } from './notifications';

export type Shell = {
	isPi: boolean;
	unread: number;
	/** Registrations the person may decide (a manager: all; a PI: their groups'). */
	pendingApprovals: number;
	/** Bookings waiting for approval, for a manager; 0 for everyone else. */
	pendingBookings: number;
	checkPrompt: ReturnType<typeof promptOf>;
};

export async function shellOf(user: { id: number; role: Role }, now = new Date()): Promise<Shell> {
	const candidates = checkCandidates(user.id, now).as('c');
	const count = (query: SQLWrapper) => sql<number>`${query}`.mapWith(Number);
	const rows = await db
		.select({
			isPi: sql<number>`${exists(ledByQuery(user.id))}`.mapWith(Number),
			unread: count(unreadQuery(user.id)),
			// A PI's count is of their own groups; for someone who leads none it is 0.
			pendingApprovals: count(pendingForQuery(user)),
			pendingBookings: hasRole(user.role, 'manager')
				? count(pendingBookingsQuery())
				: sql<number>`0`.mapWith(Number),
			id: candidates.id,
			boxName: candidates.boxName,
			status: candidates.status,
			startAt: candidates.startAt,
			endAt: candidates.endAt,
			checkInAt: candidates.checkInAt,
			checkOutAt: candidates.checkOutAt
		})
		.from(users)
		.leftJoin(candidates, sql`true`)
		.where(eq(users.id, user.id))
		// A derived table's order does not carry over to the outer query.
		.orderBy(asc(candidates.startAt), asc(candidates.id));
	const first = rows[0];
	const found = rows.flatMap((r) =>
		r.id !== null && r.startAt && r.endAt && r.status && r.boxName !== null
			? [
					{
						id: r.id,
						boxName: r.boxName,
						status: r.status,
						startAt: r.startAt,
						endAt: r.endAt,
						checkInAt: r.checkInAt,
						checkOutAt: r.checkOutAt
					}
				]
			: []
	);
	return {
		isPi: Boolean(first?.isPi),
		unread: first?.unread ?? 0,
		pendingApprovals: first?.pendingApprovals ?? 0,
		pendingBookings: first?.pendingBookings ?? 0,
		checkPrompt: promptOf(found, now)
	};
}
