import { config } from '$lib/server/config';
import { shellOf } from '$lib/server/services/shell';
import type { LayoutServerLoad } from './$types';

export const load: LayoutServerLoad = async ({ locals }) => {
	const user = locals.user;
	if (!user) return { user: null, tz: config.facilityTz, currency: config.facilityCurrency };
	// Every page runs this: one statement of indexed counts and the check-in prompt.
	const shell = await shellOf(user);
	return {
		tz: config.facilityTz,
		currency: config.facilityCurrency,
		user: { id: user.id, name: user.name, email: user.email, role: user.role, isPi: shell.isPi },
		unread: shell.unread,
		checkPrompt: shell.checkPrompt,
		pendingApprovals: shell.pendingApprovals,
		pendingBookings: shell.pendingBookings
	};
};
