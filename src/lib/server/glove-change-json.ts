// The glove change as the API shows it (DESIGN.md's contract), times in the facility zone.
import { isoInZone } from '$lib/domain/time';
import { config } from './config';
import type { gloveChangeView } from './services/glove-changes';

export function gloveChangeJson(v: Awaited<ReturnType<typeof gloveChangeView>>) {
	const tz = config.facilityTz;
	return {
		id: v.change.id,
		portId: v.port.id,
		boxId: v.box.id,
		outageId: v.change.outageId,
		status: v.change.status,
		startedAt: isoInZone(v.change.startedAt, tz),
		steps: v.change.steps.map((e) => ({
			key: e.key,
			doneAt: isoInZone(new Date(e.at), tz),
			doneBy: e.byName,
			doneById: e.byId,
			skipReason: e.skipReason ?? null,
			...(e.glove ? { glove: e.glove } : {})
		})),
		cycles: v.cycles,
		nextSteps: v.nextSteps,
		glove: v.fitted,
		flush: v.flush,
		blockers: v.blockers,
		outage: {
			id: v.outage.id,
			start: isoInZone(v.outage.startAt, tz),
			end: isoInZone(v.outage.endAt, tz)
		},
		cancelledBookings: v.cancelled.map((b) => ({
			id: b.id,
			userName: b.userName,
			start: isoInZone(b.startAt, tz),
			end: isoInZone(b.endAt, tz),
			delivery: b.delivery
		})),
		abandonReason: v.change.abandonReason,
		completedAt: v.change.completedAt && isoInZone(v.change.completedAt, tz)
	};
}
