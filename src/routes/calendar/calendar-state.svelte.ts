// The calendar page's state: which box and view, the event-calendar options, the event
// picked for the details panel, and moves made by dragging. The grid runs on the facility's
// wall clock: events arrive with offsets and are shown as floating local times, so a week
// across a daylight-saving change still reads right.
import { tick } from 'svelte';
import type { Calendar as EC } from '@event-calendar/core';
import { currentOffset, fromWallClock, wallClock } from '$lib/domain/time';
import { changeBooking } from './booking-api';
import { rangeText, withBooking, type ApiBooking, type ApiEvent, type Reason } from './types';

export type View = 'week' | 'day' | 'list';
const ecView: Record<View, string> = {
	week: 'timeGridWeek',
	day: 'resourceTimeGridDay',
	list: 'listWeek'
};

export const isView = (v: string | null): v is View => v === 'week' || v === 'day' || v === 'list';

/** A selection on the grid, as the booking form takes it (facility wall clock). */
export type Range = { boxId?: string; date: string; start: string; end: string };

/** What a move, an edit or a cancellation came to, shown above the grid. */
export type Notice = { ok: string } | { message: string; reasons: Reason[] };

const pad = (n: number) => String(n).padStart(2, '0');

/** An event-calendar date (local fields = facility wall clock) as an instant, ISO. */
function instant(d: Date, tz: string): string {
	const floating = `${d.getFullYear()}-${pad(d.getMonth() + 1)}-${pad(d.getDate())}T${pad(d.getHours())}:${pad(d.getMinutes())}:00`;
	return fromWallClock(floating, tz).toISOString();
}

export class CalendarState {
	boxId = $state('');
	view = $state<View>('week');
	/** The event whose details the side panel shows, or null for the booking form. */
	selected = $state<ApiEvent | null>(null);
	notice = $state<Notice | null>(null);
	loadError = $state('');
	calendar = $state<EC>();
	readonly options: EC.Options;
	private readonly tz: string;
	private readonly gasOf: Map<number, string>;

	constructor(
		tz: string,
		init: {
			boxId: string;
			view: View;
			date?: string;
			resources: { id: string; title: string }[];
			gasOf: Map<number, string>;
			onrange: (range: Range) => void;
		}
	) {
		this.tz = tz;
		this.gasOf = init.gasOf;
		this.boxId = init.boxId;
		this.view = init.view;
		this.options = $state({
			view: ecView[init.view],
			...(init.date ? { date: init.date } : {}),
			timeZone: currentOffset(tz),
			firstDay: 1,
			locale: 'en-GB',
			allDaySlot: false,
			nowIndicator: true,
			selectable: true,
			// Each event says whether it may be dragged (its holder's own, not yet started).
			editable: false,
			slotDuration: '00:30',
			snapDuration: '00:15',
			scrollTime: '07:00:00',
			height: '70vh',
			slotLabelFormat: { hour: '2-digit', minute: '2-digit', hour12: false } as const,
			eventTimeFormat: { hour: '2-digit', minute: '2-digit', hour12: false } as const,
			headerToolbar: { start: 'prev,next today', center: 'title', end: '' },
			noEventsContent: 'Nothing booked this week.',
			resources: init.resources,
			eventSources: [{ events: (info: { startStr: string; endStr: string }) => this.fetch(info) }],
			eventClassNames: (info: { event: { extendedProps: Record<string, unknown> } }) => {
				const { api, gas } = info.event.extendedProps as { api?: ApiEvent; gas?: string };
				// A selection being drawn is an event of the calendar's own, with nothing of ours.
				if (!api) return [];
				return [
					`bw-${api.kind}`,
					api.mine ? 'bw-mine' : 'bw-other',
					`bw-gas-${gas}`,
					...(api.booking?.movable ? ['bw-movable'] : [])
				];
			},
			// With a click handler every event is a focusable button that Enter opens.
			eventClick: (info: { event: EC.Event }) => this.pick(info.event),
			// A booking stays on its box: the day view's other columns refuse it.
			dragConstraint: (info: { newResource?: unknown }) => !info.newResource,
			eventDrop: (info: { event: EC.Event; revert: () => void }) => this.moved(info),
			eventResize: (info: { event: EC.Event; revert: () => void }) => this.moved(info),
			select: (info: { startStr: string; endStr: string; resource?: { id: string } }) => {
				this.selected = null;
				init.onrange({
					boxId: info.resource?.id,
					date: info.startStr.slice(0, 10),
					start: info.startStr.slice(11, 16),
					end: info.endStr.slice(11, 16)
				});
			}
		});
	}

	private async fetch(info: { startStr: string; endStr: string }) {
		const start = encodeURIComponent(fromWallClock(info.startStr, this.tz).toISOString());
		const end = encodeURIComponent(fromWallClock(info.endStr, this.tz).toISOString());
		const url =
			this.view === 'day'
				? `/api/events?start=${start}&end=${end}`
				: `/api/boxes/${this.boxId}/events?start=${start}&end=${end}`;
		const response = await fetch(url).catch(() => null);
		if (!response?.ok) {
			this.loadError = 'The schedule could not be loaded; try again.';
			return [];
		}
		this.loadError = '';
		const body: { events: ApiEvent[] } = await response.json();
		// A list reads better without the purge buffers: each booking says its purge.
		const shown =
			this.view === 'list' ? body.events.filter((e) => e.kind !== 'purge') : body.events;
		return shown.map((e) => ({
			id: e.id,
			resourceIds: [String(e.boxId)],
			start: wallClock(e.start, this.tz),
			end: wallClock(e.end, this.tz),
			title: e.title,
			startEditable: Boolean(e.booking?.movable),
			durationEditable: Boolean(e.booking?.movable),
			extendedProps: { api: e, gas: this.gasOf.get(e.boxId) }
		}));
	}

	show(next: { box?: string; view?: View }) {
		if (next.box !== undefined) this.boxId = next.box;
		if (next.view) this.view = next.view;
		this.options.view = ecView[this.view];
		this.selected = null;
		this.refresh();
	}

	refresh() {
		this.calendar?.refetchEvents();
	}

	/** Opens an event's details; a purge buffer opens the booking it follows. */
	async pick(event: EC.Event) {
		let api = event.extendedProps.api as ApiEvent | undefined;
		if (!api) return;
		if (api.kind === 'purge') {
			const owner = this.calendar?.getEventById(`booking-${api.bookingId}`);
			api = (owner?.extendedProps.api as ApiEvent | undefined) ?? api;
		}
		// Focus comes back to the event when the details close.
		this.opener = document.activeElement instanceof HTMLElement ? document.activeElement : null;
		this.selected = api;
		this.notice = null;
		await tick();
		document.getElementById('details-heading')?.focus();
	}

	private opener: HTMLElement | null = null;

	/** Back to the booking form; focus returns to the event that was opened, if still drawn. */
	async close() {
		this.selected = null;
		await tick();
		if (this.opener?.isConnected) this.opener.focus();
		this.opener = null;
	}

	/** A drag or resize of one's own booking: PATCH, and back where it was when refused. */
	private async moved(info: { event: EC.Event; revert: () => void }) {
		const api = info.event.extendedProps.api as ApiEvent | undefined;
		if (!api?.bookingId || !api.booking?.movable || !info.event.end) return info.revert();
		const start = instant(info.event.start, this.tz);
		const end = instant(info.event.end, this.tz);
		const answer = await changeBooking(api.bookingId, { start, end });
		if (!answer.ok) {
			info.revert();
			this.notice = { message: answer.message, reasons: answer.reasons };
			return;
		}
		this.changed(answer.booking);
	}

	/** A booking was moved or changed (by dragging or the details form): say so, redraw. */
	changed(b: ApiBooking) {
		const when = rangeText(b, this.tz);
		const again = b.status === 'pending' ? '; it waits for approval again' : '';
		this.notice = { ok: `Saved: ${when}${again}.` };
		if (this.selected?.bookingId === b.id) this.selected = withBooking(this.selected, b);
		this.refresh();
	}

	/** A booking was cancelled from its details. */
	async cancelled() {
		this.selected = null;
		this.notice = { ok: 'Booking cancelled; the time is free for others.' };
		this.refresh();
		await tick();
		document.getElementById('cal-notice')?.focus();
	}
}
