import { requireUser } from '$lib/server/guard';
import { listBoxes } from '$lib/server/services/boxes';
import { currentCertifications } from '$lib/server/services/training';
import { profile } from '$lib/server/services/accounts';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const user = requireUser(event);
	const [boxes, certs, me] = await Promise.all([
		listBoxes(),
		currentCertifications(user.id),
		profile(user.id)
	]);
	const held = new Set(certs.map((c) => c.moduleId));
	return {
		// The groups a booking may be billed to; the first is the default.
		groups: me.groups.map((g: { id: number; name: string }) => ({ id: g.id, name: g.name })),
		boxes: boxes.map((b) => ({
			id: b.id,
			name: b.name,
			gas: b.gas,
			condition: b.condition,
			// A hint for which box to show first; the server still checks every booking.
			bookable: b.requiredModules.every((m) => held.has(m.id))
		}))
	};
};
