import QRCode from 'qrcode';
import { requireRole } from '$lib/server/guard';
import { listBoxes } from '$lib/server/services/boxes';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	requireRole(event, 'manager');
	// The address a phone can open: the public ORIGIN when it is set (adapter-node then
	// gives every request that origin), else the one this manager's browser reached.
	const origin = event.url.origin;
	const boxes = await listBoxes();
	return {
		labels: await Promise.all(
			boxes.map(async (b) => {
				const url = `${origin}/boxes/${b.id}/here`;
				return {
					id: b.id,
					name: b.name,
					gas: b.gas,
					room: b.room,
					url,
					// Drawn here from our own URL (digits and the origin), never from typed text.
					qrSvg: await QRCode.toString(url, { type: 'svg', margin: 1, errorCorrectionLevel: 'M' })
				};
			})
		)
	};
};
