import { config } from '$lib/server/config';
import { countPendingFor, groupsLedBy } from '$lib/server/services/accounts';
import { countPendingBookings } from '$lib/server/services/calendar';
import { pendingCheck } from '$lib/server/services/checkins';
import { unreadCount } from '$lib/server/services/notifications';
import type { LayoutServerLoad } from './$types';

export const load: LayoutServerLoad = async ({ locals }) => {
	const user = locals.user;
	if (!user) return { user: null, tz: config.facilityTz, currency: config.facilityCurrency };
	// Every page runs this: a handful of indexed counts, side by side.
	const isManager = user.role === 'manager' || user.role === 'admin';
	const [led, unread, checkPrompt, pendingBookings] = await Promise.all([
		groupsLedBy(user.id),
		unreadCount(user.id),
		pendingCheck(user.id),
		isManager ? countPendingBookings() : 0
	]);
	const isPi = led.length > 0;
	return {
		tz: config.facilityTz,
		currency: config.facilityCurrency,
		user: { id: user.id, name: user.name, email: user.email, role: user.role, isPi },
		unread,
		checkPrompt,
		pendingApprovals: isPi || isManager ? await countPendingFor(user) : 0,
		pendingBookings
	};
};
