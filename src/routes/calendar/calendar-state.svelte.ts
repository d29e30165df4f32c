// The calendar page's state: which box and view, the event-calendar options, the event
// picked for the details panel, and moves made by dragging. The grid runs on the facility's
// wall clock: events arrive with offsets and are shown as floating local times, so a week
// across a daylight-saving change still reads right.
import { tick } from 'svelte';
import type { Calendar as EC } from '@event-calendar/core';
import {
	dayHeading,
	listDayHeading,
	rangeTitle,
	swipeStep,
	todayIn,
	within,
	ymd
} from '$lib/domain/calendar-view';
import { currentOffset, formatDateLong, fromWallClock, wallClock } from '$lib/domain/time';
import { changeBooking } from './booking-api';
import { rangeText, withBooking, type ApiBooking, type ApiEvent, type Reason } from './types';

export type View = 'week' | 'day' | 'list';
// On a narrow screen (a phone at the box) the week of one box shows one day at a time.
const ecView = (view: View, narrow: boolean) =>
	({
		week: narrow ? 'timeGridDay' : 'timeGridWeek',
		day: 'resourceTimeGridDay',
		list: 'listWeek'
	})[view];

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
	/** Below 640 px: one day instead of a week, buttons and swipes between days. */
	narrow = $state(false);
	/** The days shown, [start, end) as YYYY-MM-DD, from the calendar's datesSet. */
	range = $state({ start: '', end: '' });
	readonly today: string;
	readonly options: EC.Options;
	private readonly tz: string;
	/** The finger on the grid: where it went down and whether it moved (a swipe, not a tap). */
	private touch = { x: 0, y: 0, moved: 0, busy: false };
	private readonly gasOf: Map<number, string>;
	private readonly onrange: (range: Range) => void;

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
		this.onrange = init.onrange;
		this.boxId = init.boxId;
		this.view = init.view;
		this.today = todayIn(tz);
		const today = this.today;
		this.options = $state({
			view: ecView(init.view, false),
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
			// The toolbar is the page's own (CalendarToolbar.svelte), in the facility's words.
			headerToolbar: { start: '', center: '', end: '' },
			dayHeaderFormat: (d: Date) => dayHeading(ymd(d)),
			dayHeaderAriaLabelFormat: (d: Date) => formatDateLong(ymd(d)),
			listDayFormat: (d: Date) => listDayHeading(ymd(d)),
			listDaySideFormat: (d: Date) => (ymd(d) === today ? 'Today' : ''),
			datesSet: (info: { startStr: string; endStr: string }) => {
				this.range = { start: info.startStr.slice(0, 10), end: info.endStr.slice(0, 10) };
			},
			// On a touch screen a tap books the hour from there, and a short hold starts a drag.
			selectLongPressDelay: 400,
			dateClick: (info: EC.DateClickInfo) => this.tapped(info),
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
				this.onrange({
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
		this.options.view = ecView(this.view, this.narrow);
		this.selected = null;
		this.refresh();
	}

	refresh() {
		this.calendar?.refetchEvents();
	}

	/**
	 * A phone turned into a desk (or back): one day or the week. The calendar's date stays,
	 * so the day shown is in the week shown and the week's day (today, or ?date=) is the day.
	 */
	setNarrow(narrow: boolean) {
		if (narrow === this.narrow) return;
		this.narrow = narrow;
		this.options.view = ecView(this.view, narrow);
	}

	/** What the grid shows: one day or a week (the title and buttons say which). */
	get unit(): 'day' | 'week' {
		return this.view === 'day' || (this.view === 'week' && this.narrow) ? 'day' : 'week';
	}

	get title(): string {
		return this.range.start ? rangeTitle(this.range.start, this.range.end) : '';
	}

	get showsToday(): boolean {
		return within(this.today, this.range.start, this.range.end);
	}

	prev() {
		this.calendar?.prev();
	}

	next() {
		this.calendar?.next();
	}

	goToday() {
		this.calendar?.setOption('date', this.today);
	}

	/**
	 * Swipes on the grid, left for the next day (or week) and right for the previous: an
	 * attachment for the calendar's box. A drag or selection the calendar is making (after a
	 * hold) and a pinch are left alone.
	 */
	swipes = (el: HTMLElement) => {
		const start = (e: TouchEvent) => {
			const t = e.touches[0];
			this.touch = { x: t.clientX, y: t.clientY, moved: 0, busy: e.touches.length > 1 };
		};
		const move = (e: TouchEvent) => {
			const t = e.touches[0];
			const dx = Math.abs(t.clientX - this.touch.x);
			const dy = Math.abs(t.clientY - this.touch.y);
			this.touch.moved = Math.max(this.touch.moved, dx, dy);
			if (el.querySelector('.ec-selecting, .ec-dragging, .ec-resizing-y') || e.touches.length > 1)
				this.touch.busy = true;
			// A sideways move is ours: the browser neither pans nor goes back a page with it.
			if (!this.touch.busy && this.view !== 'list' && dx > 10 && dx > dy && e.cancelable)
				e.preventDefault();
		};
		const end = (e: TouchEvent) => {
			const t = e.changedTouches[0];
			if (this.touch.busy || this.view === 'list' || !t) return;
			const step = swipeStep(t.clientX - this.touch.x, t.clientY - this.touch.y);
			if (step === 1) this.next();
			if (step === -1) this.prev();
		};
		el.addEventListener('touchstart', start, { passive: true });
		el.addEventListener('touchmove', move, { passive: false });
		el.addEventListener('touchend', end, { passive: true });
		return () => {
			el.removeEventListener('touchstart', start);
			el.removeEventListener('touchmove', move);
			el.removeEventListener('touchend', end);
		};
	};

	/** A tap on an empty time (touch, or any click on a narrow screen): an hour from there. */
	private tapped(info: EC.DateClickInfo) {
		const pointer = (info.jsEvent as Partial<PointerEvent>).pointerType;
		const touch = pointer !== undefined && pointer !== 'mouse';
		if (!(touch || this.narrow) || (touch && this.touch.moved > 10)) return;
		const minutes = info.date.getHours() * 60 + (info.date.getMinutes() < 30 ? 0 : 30);
		const clock = (m: number) => `${pad(Math.floor(m / 60))}:${pad(m % 60)}`;
		const range = {
			boxId: info.resource ? String(info.resource.id) : undefined,
			date: ymd(info.date),
			start: clock(minutes),
			end: minutes + 60 < 24 * 60 ? clock(minutes + 60) : '23:59'
		};
		// After the tap's own click: the form scrolls into view, and a click landing where
		// the grid was must not fall on the form's fields.
		let done = false;
		const apply = () => {
			if (done) return;
			done = true;
			window.removeEventListener('click', apply, true);
			this.selected = null;
			this.onrange(range);
		};
		window.addEventListener('click', apply, true);
		setTimeout(apply, 500);
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
