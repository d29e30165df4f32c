// Boxes as the API shows them, times in the facility zone.
import { handForPosition } from '$lib/domain/boxes';
import { isoInZone } from '$lib/domain/time';
import type { BoxSummary } from './services/boxes';
import type { glovesOfBox } from './services/gloves';

export function summaryJson(b: BoxSummary, tz: string) {
	return {
		...b,
		latestReading: b.latestReading && {
			...b.latestReading,
			at: isoInZone(b.latestReading.at, tz)
		},
		currentOutage: b.currentOutage && {
			...b.currentOutage,
			endAt: isoInZone(b.currentOutage.endAt, tz)
		}
	};
}

/** One box with each port's side and the glove on it (or null). */
export function boxJson(
	b: BoxSummary,
	fitted: Awaited<ReturnType<typeof glovesOfBox>>,
	tz: string
) {
	return {
		...summaryJson(b, tz),
		ports: b.ports.map((p) => {
			const row = fitted.find((r) => r.port.id === p.id);
			const g = row?.glove;
			return {
				id: p.id,
				position: p.position,
				diameterMm: p.diameterMm,
				side: handForPosition(p.position),
				glove: g
					? {
							id: g.id,
							material: g.material,
							size: g.size,
							thicknessMm: g.thicknessMm,
							hand: g.hand,
							turnedInsideOut: g.turnedInsideOut,
							installedAt: isoInZone(g.installedAt, tz),
							state: p.gloveState
						}
					: null,
				sealed: p.gloveState === 'sealed',
				openChangeId: row?.openChangeId ?? null
			};
		})
	};
}
