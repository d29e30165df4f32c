import { listInMemory, readListQuery, type ListSpec } from '$lib/domain/listing';
import { hasRole } from '$lib/domain/roles';
import { requirePiOrRole, requireRole } from '$lib/server/guard';
import { decideBooking } from '$lib/server/services/bookings';
import { pendingBookings } from '$lib/server/services/calendar';
import { approveAccount, declineAccount, pendingAccountsFor } from '$lib/server/services/accounts';
import { decisionSchema } from '$lib/validation/account';
import { approveBookingSchema, declineSchema } from '$lib/validation/bookings';
import { runConfirmedForm, runForm } from '$lib/server/forms';
import { formatRange } from '$lib/domain/time';
import { config } from '$lib/server/config';
import type { Actions, PageServerLoad, RequestEvent } from './$types';

// Both queues hold only what waits for a decision, so they are sorted and paged in memory.
const accountsList = {
	prefix: 'accounts',
	sorts: ['name', 'group', 'registered'],
	defaultSort: 'registered',
	defaultDir: 'asc',
	perPage: 25
} as const satisfies ListSpec;

const bookingsList = {
	prefix: 'bookings',
	sorts: ['when', 'box', 'who'],
	defaultSort: 'when',
	defaultDir: 'asc',
	perPage: 25
} as const satisfies ListSpec;

export const load: PageServerLoad = async (event) => {
	const user = await requirePiOrRole(event, 'manager');
	const isManager = hasRole(user.role, 'manager');
	const params = event.url.searchParams;
	const accounts = listInMemory(
		await pendingAccountsFor(user),
		readListQuery(params, accountsList),
		{
			sortBy: { name: (a) => a.name, group: (a) => a.groupName, registered: (a) => a.registeredAt },
			text: (a) => `${a.name} ${a.email} ${a.groupName}`
		}
	);
	const bookings = listInMemory(
		isManager ? await pendingBookings() : [],
		readListQuery(params, bookingsList),
		{
			sortBy: { when: (b) => b.startAt, box: (b) => b.boxName, who: (b) => b.userName },
			text: (b) => `${b.boxName} ${b.userName} ${b.purpose}`
		}
	);
	return {
		pending: accounts.rows,
		pendingView: accounts.view,
		bookings: bookings.rows,
		bookingsView: bookings.view,
		isManager
	};
};

async function decide(event: RequestEvent, decision: typeof approveAccount) {
	const user = await requirePiOrRole(event, 'manager');
	return runForm(event.request, decisionSchema, async ({ userId }) => {
		await decision(user, userId);
		return { decided: userId };
	});
}

export const actions: Actions = {
	approve: (event) => decide(event, approveAccount),
	decline: async (event) => {
		const user = await requirePiOrRole(event, 'manager');
		return runConfirmedForm(
			event.request,
			decisionSchema,
			async ({ userId }) => {
				const row = (await pendingAccountsFor(user)).find((r) => r.userId === userId);
				return {
					title: row ? `Decline ${row.name}’s registration?` : 'Decline this registration?',
					message: row
						? `The account (${row.email}, asking to join ${row.groupName}) is deleted; they may register again.`
						: 'The account is deleted; they may register again.',
					yes: 'Yes, decline it'
				};
			},
			async ({ userId }) => {
				await declineAccount(user, userId);
				return { decided: userId };
			}
		);
	},
	approveBooking: async (event) => {
		const user = requireRole(event, 'manager');
		return runForm(event.request, approveBookingSchema, async ({ bookingId }) => {
			await decideBooking(user, bookingId, 'approve');
			return { bookingDecided: bookingId };
		});
	},
	declineBooking: async (event) => {
		const user = requireRole(event, 'manager');
		return runConfirmedForm(
			event.request,
			declineSchema,
			async ({ bookingId }) => {
				const b = (await pendingBookings()).find((x) => x.id === bookingId);
				return b
					? {
							title: `Decline ${b.userName}’s booking on ${b.boxName}, ${formatRange(b.startAt, b.endAt, config.facilityTz)}?`,
							message:
								'The booking is cancelled and the time freed; they see your reason on their bookings. It is not billed.',
							yes: 'Yes, decline it'
						}
					: null;
			},
			async ({ bookingId, reason }) => {
				await decideBooking(user, bookingId, 'decline', reason);
				return { bookingDecided: bookingId };
			}
		);
	}
};
