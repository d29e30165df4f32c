// The header line of a sensor's log: which column holds the time (or the date and the time
// of day), O2 and H2O, by the words of the common languages, with a unit in brackets. Part
// of the one rule set of readings-csv.ts.
import type { Column, CsvLayout } from './readings-csv';

/** How much of a line a message quotes. */
const QUOTE_CHARS = 160;

/** Lower case, accents and the subscript ₂ folded: "Oxígeno" → "oxigeno", "O₂" → "o2". */
const fold = (s: string) =>
	s
		.normalize('NFD')
		.replace(/[\u0300-\u036f]/g, '')
		.toLowerCase()
		.replace(/₂/g, '2');

const words = (list: string) => new Set(list.split('|'));
/** A column holding the date and the time of day (or just the time, read as a timestamp). */
const TIMESTAMP = words(
	'time|timestamp|time stamp|datetime|date time|date and time|at|zeit|zeitstempel|zeitpunkt|messzeit|messzeitpunkt|uhrzeit|datum uhrzeit|datum und uhrzeit|datum zeit|heure|horodatage|date heure|date et heure|hora|fecha hora|fecha y hora|tiempo|marca de tiempo|marca temporal|ora|data ora|data e ora|orario|tijd|tijdstip|tijdstempel|datum tijd|datum en tijd'
);
/** A column holding only the date, beside one holding the time of day. */
const DATE_ONLY = words('date|datum|fecha|data|jour|tag|dag');
const TIME_OF_DAY = words('time|zeit|uhrzeit|heure|hora|tiempo|ora|orario|tijd');
const OXYGEN = words(
	'o2|oxygen|sauerstoff|restsauerstoff|sauerstoffgehalt|sauerstoffkonzentration|oxygene|oxigeno|ossigeno|zuurstof'
);
const WATER = words(
	'h2o|water|water vapour|water vapor|moisture|humidity|feuchte|feuchtigkeit|restfeuchte|wasser|wassergehalt|wasserdampf|humidite|eau|vapeur d eau|humedad|agua|umidita|acqua|vocht|vochtigheid|waterdamp'
);
/** Words that say nothing about which quantity a column holds. */
const FILLER = words(
	'ppm|ppmv|vpm|in|en|de|d|la|le|du|di|der|des|of|the|concentration|konzentration|gehalt|level|content|teneur|contenido|contenuto|concentrazione|concentratie|gehalte|value|wert|valeur|valor|valore|waarde|reading|messwert|mesure|medida|misura|meting'
);
const PPM = /^(ppm|ppmv|vpm)$/;
/** Units of other quantities: a column in them is not a ppm reading. */
const OTHER_UNIT = /%|ppb|mg|g\/m|°|deg|dew|tau|rosee|rocio|rugiada|dauw|mbar|hpa|pa$/;

type Role = 'time' | 'date' | 'tod' | 'o2' | 'h2o';
type HeaderCell = { roles: Set<Role>; wrongUnit: string | null };

function readHeaderCell(raw: string): HeaderCell {
	let wrongUnit: string | null = null;
	// Units in brackets ("O2 (ppm)", "H2O [ppmv]"), or written with a % or ° ("Feuchte %rF").
	const units: string[] = [];
	const rest = raw.replace(/\(([^)]*)\)|\[([^\]]*)\]|\{([^}]*)\}/g, (_, a, b, c) => {
		units.push(((a ?? b ?? c) as string).trim());
		return ' ';
	});
	const tokens = fold(rest)
		.split(/[^a-z0-9%°]+/)
		.filter(Boolean);
	for (const unit of [...units, ...rest.split(/\s+/).filter((t) => /[%°]/.test(t))]) {
		const folded = fold(unit);
		if (!PPM.test(folded) && OTHER_UNIT.test(folded)) wrongUnit = unit;
	}
	const phrase = tokens.filter((t) => !FILLER.has(t) && !/[%°]/.test(t)).join(' ');
	const roles = new Set<Role>();
	if (TIMESTAMP.has(phrase)) roles.add('time');
	if (DATE_ONLY.has(phrase)) roles.add('date');
	if (TIME_OF_DAY.has(phrase)) roles.add('tod');
	if (OXYGEN.has(phrase)) roles.add('o2');
	if (WATER.has(phrase)) roles.add('h2o');
	return { roles, wrongUnit };
}

/** The file's own words in quotes, a long line cut short. */
export const quote = (text: string) =>
	`"${text.length > QUOTE_CHARS ? `${text.slice(0, QUOTE_CHARS)}…` : text}"`;

const HEADER_HELP =
	'Name the columns for the time, O2 (ppm) and H2O (ppm), e.g. "time,O2 (ppm),H2O (ppm)" or "Zeit;O2 (ppm);H2O (ppm)", or leave the header out and put the columns in that order.';

/** The columns a header names, or the refusal that quotes it. */
export function columnsOfHeader(
	header: string[],
	rawLine: string
): { ok: true; columns: CsvLayout['columns'] } | { ok: false; message: string } {
	const cells = header.map(readHeaderCell);
	const named = (role: Role) => cells.flatMap((c, index) => (c.roles.has(role) ? [index] : []));
	const col = (index: number): Column => ({ index, name: header[index].trim() });
	for (const role of ['o2', 'h2o'] as const) {
		const found = named(role);
		const which = role === 'o2' ? 'O2' : 'H2O';
		if (found.length > 1)
			return {
				ok: false,
				message: `The header line ${quote(rawLine)} has more than one ${which} column (${found.map((i) => quote(header[i].trim())).join(' and ')}); keep one.`
			};
		const unit = found.length ? cells[found[0]].wrongUnit : null;
		if (unit)
			return {
				ok: false,
				message: `The column ${quote(header[found[0]].trim())} is in ${unit}, not in ppm; readings are stored in ppm${role === 'o2' ? ' (1 % is 10,000 ppm)' : ''}.`
			};
	}
	const [o2] = named('o2');
	const [h2o] = named('h2o');
	const dates = named('date');
	const clocks = named('tod').filter((i) => !dates.includes(i));
	let time: number | undefined;
	let date: number | undefined;
	if (dates.length === 1 && clocks.length === 1) [date, time] = [dates[0], clocks[0]];
	else time = named('time')[0] ?? (dates.length === 1 ? dates[0] : undefined);
	const missing = [
		time === undefined && 'the time',
		o2 === undefined && 'O2 (ppm)',
		h2o === undefined && 'H2O (ppm)'
	].filter(Boolean);
	if (time === undefined || o2 === undefined || h2o === undefined)
		return {
			ok: false,
			message: `The header line ${quote(rawLine)} names no column for ${missing.join(', ').replace(/, ([^,]*)$/, ' or $1')}. ${HEADER_HELP}`
		};
	return {
		ok: true,
		columns: {
			time: col(time),
			...(date === undefined ? {} : { date: col(date) }),
			o2: col(o2),
			h2o: col(h2o)
		}
	};
}
