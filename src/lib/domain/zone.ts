import { IANAZone, Info, type Zone } from 'luxon';

const HOUR_MS = 3_600_000;
/** Hours remembered per zone (about 5.7 years of distinct hours) before the memo starts afresh. */
const MAX_HOURS = 50_000;

/**
 * An IANA zone whose offset is remembered per UTC hour. luxon's own IANAZone asks
 * `Intl.DateTimeFormat#formatToParts` for the offset at every instant, and every DateTime in
 * a facility zone needs it (10–11 % of a booking request's CPU).
 *
 * An hour whose first and last millisecond have the same offset has that offset throughout:
 * no zone in the IANA data changes its clock twice within one hour. An hour with a change in it is marked
 * (null) and each instant in it is asked of luxon as before.
 *
 * It extends IANAZone rather than wrapping one, so type ('iana'), name, offsetName, equals and
 * isValid are luxon's own (Intl formatting still takes the zone's name), and formatOffset
 * goes through the remembered offset.
 */
class HourlyOffsetZone extends IANAZone {
	readonly #hours = new Map<number, number | null>();

	override offset(ts: number): number {
		const hour = Math.floor(ts / HOUR_MS);
		let steady = this.#hours.get(hour);
		if (steady === undefined) {
			const first = super.offset(hour * HOUR_MS);
			steady = first === super.offset(hour * HOUR_MS + HOUR_MS - 1) ? first : null;
			if (this.#hours.size >= MAX_HOURS) this.#hours.clear();
			this.#hours.set(hour, steady);
		}
		return steady ?? super.offset(ts);
	}
}

const zones = new Map<string, HourlyOffsetZone>();

/**
 * The luxon zone to pass for a facility zone name (`{ zone: zoneOf(tz) }`, `setZone(zoneOf(tz))`):
 * one per IANA name, with its offsets remembered. Anything else luxon reads from a zone string
 * ('UTC', 'UTC+1', 'local', an unknown name) is returned as luxon's own zone for it, so it
 * behaves exactly as the plain string did (an unknown name still gives an invalid DateTime).
 */
export function zoneOf(tz: string): Zone {
	const known = zones.get(tz);
	if (known) return known;
	const plain = Info.normalizeZone(tz);
	// Only a valid IANA zone's own name: 'default' may give one too, but it follows Settings.
	if (plain.type !== 'iana' || !plain.isValid || plain.name !== tz) return plain;
	const zone = new HourlyOffsetZone(tz);
	zones.set(tz, zone);
	return zone;
}

/**
 * zoneOf's remembered IANA zone for `tz`, or null when luxon reads `tz` as anything else:
 * for those ('UTC' prints "Z", an unknown name is invalid) callers keep to luxon itself.
 */
export function rememberedZoneOf(tz: string): IANAZone | null {
	const zone = zoneOf(tz);
	return zone instanceof HourlyOffsetZone ? zone : null;
}
