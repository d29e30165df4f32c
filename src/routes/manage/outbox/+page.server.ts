import { z } from 'zod';
import { requireRole } from '$lib/server/guard';
import { retryMessage } from '$lib/server/mail/worker';
import { outboxList, outboxPage } from '$lib/server/services/notifications';
import { readListQuery } from '$lib/domain/listing';
import { runForm } from '$lib/server/forms';
import { ServiceError } from '$lib/server/services/errors';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	requireRole(event, 'manager');
	// `?status=failed` keeps working: the filter is the list's own parameter.
	const { rows, view } = await outboxPage(readListQuery(event.url.searchParams, outboxList));
	return { rows, view };
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
