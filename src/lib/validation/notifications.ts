import { z } from 'zod';

/** Refuses a field it does not name, under that field's own name. */
const strict = <S extends z.ZodRawShape>(shape: S) =>
	z.object(shape).catchall(z.undefined({ error: 'Not a field of this request.' }));

/** `POST /api/me/notifications/read` and the "Mark as read" buttons: one's own notices. */
export const markReadSchema = strict({
	ids: z
		.array(z.coerce.number().int().positive(), { error: 'List the notices to mark as read.' })
		.min(1, 'List the notices to mark as read.')
		.max(500, 'At most 500 at a time.')
});

/** "Mark all as read" takes nothing. */
export const markAllReadSchema = strict({});
