import { fail } from '@sveltejs/kit';
import { requireRole } from '$lib/server/guard';
import { retryMessage } from '$lib/server/mail/worker';
import { outboxPage } from '$lib/server/services/notifications';
import { formId } from '$lib/server/forms';
import type { Actions, PageServerLoad } from './$types';

const statuses = ['pending', 'sending', 'sent', 'failed'] as const;

export const load: PageServerLoad = async (event) => {
	requireRole(event, 'manager');
	const wanted = event.url.searchParams.get('status');
	const status = statuses.find((s) => s === wanted);
	return { rows: await outboxPage(status), status: status ?? null };
};

export const actions: Actions = {
	retry: async (event) => {
		requireRole(event, 'manager');
		const id = formId((await event.request.formData()).get('id'));
		if (!Number.isSafeInteger(id) || !(await retryMessage(id))) {
			return fail(409, { message: 'Only a failed message can be retried.' });
		}
		return { retried: id };
	}
};
