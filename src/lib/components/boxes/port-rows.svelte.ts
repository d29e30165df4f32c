// The box form's ports while they are edited. Seeded once from the values the page was
// given, then changed only here: re-deriving the rows from the values (an effect writing
// what it reads) looped and undid every "Add a port". Each row keeps its port's id, so
// saving updates that port in place and keeps its gloves.

export type GivenPort = { id?: number | string; position: string; diameterMm: number | string };
export type PortRow = { key: number; id: string; position: string; diameterMm: string };

/** A new box starts with the two front ports most boxes have. */
const FIRST_PORTS: GivenPort[] = [
	{ position: 'front-left', diameterMm: 200 },
	{ position: 'front-right', diameterMm: 200 }
];

export class PortRows {
	rows = $state<PortRow[]>([]);
	#nextKey = 0;

	constructor(given: readonly GivenPort[]) {
		this.rows = (given.length ? given : FIRST_PORTS).map((p) => this.#row(p));
	}

	/** An empty row for a new port (no id: saving adds it). */
	add() {
		this.rows.push(this.#row({ position: '', diameterMm: 200 }));
	}

	/** Takes the row off the list; saving then deletes that port (the page asks first). */
	remove(key: number) {
		const i = this.rows.findIndex((r) => r.key === key);
		if (i >= 0) this.rows.splice(i, 1);
	}

	#row(p: GivenPort): PortRow {
		return {
			key: this.#nextKey++,
			id: p.id === undefined ? '' : String(p.id),
			position: p.position,
			diameterMm: String(p.diameterMm)
		};
	}
}
