import { error } from '@sveltejs/kit';
import { requireRole } from '$lib/server/guard';
import { decodeSink, readSink } from '$lib/server/mail/sink';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	requireRole(event, 'manager');
	const raw = await readSink(event.params.file);
	if (raw === null) error(404, { message: 'That message is not in the sink.', code: 'not_found' });
	return { name: event.params.file, mail: await decodeSink(raw), raw };
};
