import { z } from 'zod';
import { requireRole } from '$lib/server/guard';
import { retryMessage } from '$lib/server/mail/worker';
import { outboxPage } from '$lib/server/services/notifications';
import { runForm } from '$lib/server/forms';
import { ServiceError } from '$lib/server/services/errors';
import type { Actions, PageServerLoad } from './$types';

const statuses = ['pending', 'sending', 'sent', 'failed'] as const;

export const load: PageServerLoad = async (event) => {
	requireRole(event, 'manager');
	const wanted = event.url.searchParams.get('status');
	const status = statuses.find((s) => s === wanted);
	return { rows: await outboxPage(status), status: status ?? null };
};

const retrySchema = z.strictObject({
	id: z.coerce.number({ error: 'Choose a message.' }).int().positive('Choose a message.')
});

export const actions: Actions = {
	retry: async (event) => {
		requireRole(event, 'manager');
		return runForm(event.request, retrySchema, async ({ id }) => {
			if (!(await retryMessage(id)))
				throw new ServiceError(409, 'Only a failed message can be retried.');
			return { retried: id };
		});
	}
};
