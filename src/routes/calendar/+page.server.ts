import { boxBlockers } from '$lib/domain/booking-rules';
import { requireUser } from '$lib/server/guard';
import { listBoxes } from '$lib/server/services/boxes';
import { certificationsOf } from '$lib/server/services/training';
import { profile } from '$lib/server/services/accounts';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const user = requireUser(event);
	const [boxes, standing, me] = await Promise.all([
		listBoxes(),
		certificationsOf(user.id),
		profile(user.id)
	]);
	const states = new Map(standing.map((c) => [c.moduleId, c.state]));
	return {
		// The groups a booking may be billed to; the first is the default.
		groups: me.groups.map((g: { id: number; name: string }) => ({ id: g.id, name: g.name })),
		boxes: boxes.map((b) => ({
			id: b.id,
			name: b.name,
			gas: b.gas,
			condition: b.condition,
			// Why this person cannot book it, for the pickers; the server still checks each booking.
			blockers: boxBlockers(b, states)
		}))
	};
};
