import { error } from '@sveltejs/kit';
import { config } from '$lib/server/config';
import { codeFor } from '$lib/server/http';
import { requireUser } from '$lib/server/guard';
import { idParam } from '$lib/server/params';
import { attempt } from '$lib/server/services/errors';
import { statementFor } from '$lib/server/services/statements';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const user = requireUser(event);
	const groupId = idParam(event.params.id, 'The group');
	const found = await attempt(() => statementFor(user, groupId, event.params.month));
	if (!found.ok)
		error(found.error.status, {
			message: found.error.message,
			code: found.error.code ?? codeFor(found.error.status)
		});
	return {
		...found.value,
		// The printed heading: who issues the statement and whom to ask about it.
		facility: { name: config.facilityName, contact: config.facilityContact },
		// A closed month was issued when it was closed; an open one is drawn up now.
		issuedAt: found.value.closed?.closedAt ?? new Date()
	};
};
