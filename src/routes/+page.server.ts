import { requireUser } from '$lib/server/guard';
import { profile } from '$lib/server/services/accounts';
import { bookingsOf } from '$lib/server/services/bookings';
import { listBoxes } from '$lib/server/services/boxes';
import { certificationsOf } from '$lib/server/services/training';
import { hasRole } from '$lib/domain/roles';
import { dueTasks } from '$lib/server/services/maintenance';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const user = requireUser(event);
	const [me, mine, boxes, certs] = await Promise.all([
		profile(user.id),
		bookingsOf(user.id),
		listBoxes(),
		certificationsOf(user.id)
	]);
	const maintenance = hasRole(user.role, 'manager') ? await dueTasks() : [];
	return {
		group: me.group,
		next: mine.upcoming.slice(0, 5),
		boxes,
		maintenance,
		// Held modules that are expiring, and ones that lapsed: both need a trainer.
		attention: certs
			.filter((c) => c.state === 'expiring' || c.state === 'expired')
			.map((c) => ({ module: c.moduleName, state: c.state, expiresAt: c.expiresAt }))
	};
};
