import { error, redirect } from '@sveltejs/kit';
import { runForm } from '$lib/server/forms';
import { requireRole } from '$lib/server/guard';
import { idParam } from '$lib/server/params';
import { check, checkView } from '$lib/server/services/checkins';
import { attempt } from '$lib/server/services/errors';
import { checkReadingSchema } from '$lib/validation/readings';
import type { Actions, PageServerLoad, RequestEvent } from './$types';

export const load: PageServerLoad = async (event) => {
	const user = requireRole(event, 'member');
	const found = await attempt(() => checkView(user, idParam(event.params.id, 'The booking')));
	if (!found.ok) error(404, { message: 'That booking was not found.', code: 'not_found' });
	return found.value;
};

async function act(event: RequestEvent, which: 'in' | 'out') {
	const user = requireRole(event, 'member');
	const id = idParam(event.params.id, 'The booking');
	const answer = await runForm(event.request, checkReadingSchema, async (reading) => ({
		checked: await check(user, id, which, reading)
	}));
	if ('checked' in answer) redirect(303, `/bookings?checked=${which}`);
	return answer;
}

export const actions: Actions = {
	in: (event) => act(event, 'in'),
	out: (event) => act(event, 'out')
};
