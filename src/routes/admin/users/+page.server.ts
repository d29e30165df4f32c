import { requireRole } from '$lib/server/guard';
import { formatRange } from '$lib/domain/time';
import { config } from '$lib/server/config';
import { runConfirmedForm, runForm } from '$lib/server/forms';
import { setRole } from '$lib/server/services/accounts';
import { usersList, usersPage } from '$lib/server/services/user-list';
import { readListQuery } from '$lib/domain/listing';
import { invite, resendInvitation, sendResetLink } from '$lib/server/services/account-tokens';
import {
	deactivateUser,
	deactivationPreview,
	reactivateUser
} from '$lib/server/services/deactivation';
import { listGroupNames } from '$lib/server/services/groups';
import { accountSchema, inviteSchema, roleSchema } from '$lib/validation/account';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const me = requireRole(event, 'admin');
	const query = readListQuery(event.url.searchParams, usersList);
	const [users, groups] = await Promise.all([usersPage(query), listGroupNames()]);
	return { users: users.rows, view: users.view, groups, myId: me.id };
};

export const actions: Actions = {
	role: async (event) => {
		const actor = requireRole(event, 'admin');
		return runForm(event.request, roleSchema, async ({ userId, role }) => {
			await setRole(actor, userId, role);
			return { saved: userId };
		});
	},
	invite: async (event) => {
		const actor = requireRole(event, 'admin');
		return runForm(
			event.request,
			inviteSchema,
			async (input) => ({ invited: await invite(actor, input), email: input.email }),
			{ form: 'invite' }
		);
	},
	deactivate: async (event) => {
		const actor = requireRole(event, 'admin');
		return runConfirmedForm(
			event.request,
			accountSchema,
			async ({ userId }) => {
				const { name, bookings } = await deactivationPreview(actor, userId);
				const n = bookings.length;
				const cancels =
					n === 0
						? 'They hold no bookings still to come.'
						: n === 1
							? 'Their one booking still to come is cancelled for good, and they are told by e-mail:'
							: `Their ${n} bookings still to come are cancelled for good, each with an e-mail:`;
				return {
					title: `Deactivate ${name}?`,
					message: `${name} is signed out everywhere at once and can no longer sign in or read their calendar feed until an admin reactivates the account. ${cancels}`,
					details: bookings.map(
						(b) => `${b.boxName}, ${formatRange(b.startAt, b.endAt, config.facilityTz)}`
					),
					yes: 'Yes, deactivate'
				};
			},
			async ({ userId }) => {
				const { cancelledBookingIds } = await deactivateUser(actor, userId);
				return { userId, deactivated: cancelledBookingIds.length };
			},
			{ form: 'account' }
		);
	},
	reactivate: async (event) => {
		const actor = requireRole(event, 'admin');
		return runForm(
			event.request,
			accountSchema,
			async ({ userId }) => {
				await reactivateUser(actor, userId);
				return { userId, reactivated: true };
			},
			{ form: 'account' }
		);
	},
	sendReset: async (event) => {
		const actor = requireRole(event, 'admin');
		return runForm(
			event.request,
			accountSchema,
			async ({ userId }) => {
				await sendResetLink(actor, userId);
				return { userId, resetSent: true };
			},
			{ form: 'account' }
		);
	},
	resendInvite: async (event) => {
		const actor = requireRole(event, 'admin');
		return runForm(
			event.request,
			accountSchema,
			async ({ userId }) => {
				await resendInvitation(actor, userId);
				return { userId, inviteSent: true };
			},
			{ form: 'account' }
		);
	}
};
