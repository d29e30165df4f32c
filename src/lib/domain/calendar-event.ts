// A calendar event as the API sends it and the calendar page reads it: bookings, purge
// buffers and outages, with times as ISO 8601 strings in the facility zone's offset.
import type { BookingStatus } from './bookings';

export type CalendarEvent = {
	id: string;
	kind: 'booking' | 'pending' | 'purge' | 'outage';
	boxId: number;
	start: string;
	end: string;
	title: string;
	mine: boolean;
	bookingId?: number;
	outageId?: number;
	status?: BookingStatus;
	/** A booking's details for the panel that opens on a click (not on purge buffers). */
	booking?: {
		userName: string;
		/** The status in words, checked in or out included (booking-state.ts holderStatus). */
		statusText: string;
		/** Only for its holder and managers; others see who, not what for. */
		purpose: string | null;
		chemicalClasses: string[];
		volatileSolvents: boolean;
		purgeUntil: string | null;
		/** The box's late-cancellation window, for the cancel confirmation's billing words. */
		cancelWindowHours: number;
		/** The viewer may edit or cancel it (its holder or a manager; open, not ended or checked out). */
		canChange: boolean;
		/** The viewer may drag it on the grid: their own, open, not started. */
		movable: boolean;
	};
	/** An outage's reason, for its panel. */
	reason?: string;
};
