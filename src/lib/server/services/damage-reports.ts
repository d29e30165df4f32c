// A damage report as a person files it: on a port of a box, with an optional photo. The
// port's damage page and the box's phone page both go through here, so the photo is
// checked, stored and cleaned up one way.
import type { DamageReportInput } from '$lib/validation/gloves';
import { checkPhoto, put, remove } from '../storage';
import type { Actor } from './accounts';
import { ServiceError } from './errors';
import { portAndGlove, reportDamage } from './gloves';

/**
 * Reports damage to the glove fitted on `portId` of box `boxId` (404 when the port is not
 * the box's, 409 when no glove is recorded on it). A photo that is not a small image is
 * refused on its field; a photo stored for a report that then fails is removed again.
 */
export async function reportPortDamage(
	actor: Actor & { name: string },
	boxId: number,
	portId: number,
	input: DamageReportInput,
	photo: FormDataEntryValue | null = null
) {
	const { port, glove } = await portAndGlove(boxId, portId);
	if (!glove)
		throw new ServiceError(409, 'No glove is recorded on this port.', {
			fields: { portId: 'No glove is recorded on this port.' }
		});
	let photoKey: string | undefined;
	if (photo instanceof File && photo.size > 0) {
		const checked = await checkPhoto(photo);
		if (!checked.ok)
			throw new ServiceError(400, checked.message, { fields: { photo: checked.message } });
		photoKey = await put('gloves', checked.bytes, checked.ext);
	}
	try {
		const { catastrophic } = await reportDamage(actor, { gloveId: glove.id, ...input, photoKey });
		return { catastrophic, holeSizeMm: input.holeSizeMm, portId: port.id, position: port.position };
	} catch (e) {
		// Nothing points at the photo without its report.
		if (photoKey) await remove(photoKey).catch(() => undefined);
		throw e;
	}
}
