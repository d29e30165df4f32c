import { requireUser } from '$lib/server/guard';
import { profile } from '$lib/server/services/accounts';
import { bookingsOf } from '$lib/server/services/calendar';
import { listBoxes } from '$lib/server/services/boxes';
import { certificationsOf } from '$lib/server/services/training';
import { hasRole } from '$lib/domain/roles';
import { dueTasks } from '$lib/server/services/maintenance';
import { failedMessages, groupsUsage, trainingNeeds } from '$lib/server/services/dashboard';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const user = requireUser(event);
	const { user: shell } = await event.parent();
	const [me, mine, boxes, certs] = await Promise.all([
		profile(user.id),
		bookingsOf(user.id),
		listBoxes(),
		certificationsOf(user.id)
	]);
	const isManager = hasRole(user.role, 'manager');
	const [maintenance, failed, needs, led] = await Promise.all([
		isManager ? dueTasks() : [],
		isManager ? failedMessages() : 0,
		hasRole(user.role, 'trainer') ? trainingNeeds(user.id) : null,
		shell?.isPi ? groupsUsage(user.id) : []
	]);
	return {
		group: me.group,
		next: mine.upcoming.slice(0, 5),
		boxes,
		maintenance,
		failed,
		needs,
		led,
		// Held modules that are expiring, and ones that lapsed: both need a trainer.
		attention: certs
			.filter((c) => c.state === 'expiring' || c.state === 'expired')
			.map((c) => ({ module: c.moduleName, state: c.state, expiresAt: c.expiresAt }))
	};
};
