import { config } from '$lib/server/config';
import { countPendingFor, groupsLedBy } from '$lib/server/services/accounts';
import { countPendingBookings } from '$lib/server/services/bookings';
import { pendingCheck } from '$lib/server/services/checkins';
import { unreadCount } from '$lib/server/services/notifications';
import type { LayoutServerLoad } from './$types';

export const load: LayoutServerLoad = async ({ locals }) => {
	const user = locals.user;
	if (!user) return { user: null, tz: config.facilityTz };
	const led = await groupsLedBy(user.id);
	const isPi = led.length > 0;
	const canApprove = isPi || user.role === 'manager' || user.role === 'admin';
	return {
		tz: config.facilityTz,
		user: { id: user.id, name: user.name, email: user.email, role: user.role, isPi },
		unread: await unreadCount(user.id),
		checkPrompt: await pendingCheck(user.id),
		pendingApprovals: canApprove ? await countPendingFor(user) : 0,
		pendingBookings:
			user.role === 'manager' || user.role === 'admin' ? await countPendingBookings() : 0
	};
};
