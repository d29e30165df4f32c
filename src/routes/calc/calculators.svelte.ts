// The state of each calculator on /calc: the text in its fields, the SI input the domain
// takes, the domain's problems by field and the result. Each converts once (mbar × 100 = Pa,
// readings through domain/leak.ts) and maps problems with fieldMessages, as the API does, so a
// field's message here is the API's message for the field that fed it.
import {
	antechamberEstimate,
	checkAntechamberInput,
	cyclesForTarget,
	MIN_ANTECHAMBER_CYCLES,
	o2AfterCyclesPpm
} from '$lib/domain/antechamber';
import {
	boxVolumeProblem,
	checkFlushInput,
	flushEstimate,
	RECOMMENDED_FLUSH_CYCLES
} from '$lib/domain/flush';
import { checkHumidityInput, humidity } from '$lib/domain/humidity';
import { fieldMessages, numberFromText, PA_PER_MBAR } from '$lib/domain/inputs';
import {
	checkLeakTest,
	evaluateLeakTest,
	leakFlowMbarLPerS,
	leakInputFromReadings,
	meetsClass,
	readingFieldOf,
	type IsoClass,
	type LeakReadings,
	type ReadingsMethod
} from '$lib/domain/leak';

/** A field left empty is not given (for the optional ones); anything else is read as a number. */
const optional = (text: string) => (text.trim() === '' ? undefined : numberFromText(text));
const none = (errors: Record<string, string>) => Object.keys(errors).length === 0;

export class HumidityCalc {
	from = $state<'frostPoint' | 'ppmv'>('frostPoint');
	values = $state({ frostPointC: '-76', ppmv: '1', pressureMbar: '1013.25' });

	input = $derived.by(() => {
		const pressurePa = numberFromText(this.values.pressureMbar) * PA_PER_MBAR;
		return this.from === 'frostPoint'
			? { frostPointC: numberFromText(this.values.frostPointC), pressurePa }
			: { ppmv: numberFromText(this.values.ppmv), pressurePa };
	});
	errors = $derived(fieldMessages(checkHumidityInput(this.input), { pressurePa: 'pressureMbar' }));
	result = $derived(none(this.errors) ? humidity(this.input) : null);
}

export class AntechamberCalc {
	values = $state({
		lowMbar: '1',
		highMbar: '1013',
		cycles: String(MIN_ANTECHAMBER_CYCLES),
		targetPpm: '1',
		volumeL: '40',
		pumpM3PerH: '10'
	});

	input = $derived({
		lowPa: numberFromText(this.values.lowMbar) * PA_PER_MBAR,
		highPa: numberFromText(this.values.highMbar) * PA_PER_MBAR,
		// Required here: the page says how many cycles it works out.
		cycles: numberFromText(this.values.cycles),
		targetPpm: optional(this.values.targetPpm),
		volumeL: optional(this.values.volumeL),
		pumpM3PerH: optional(this.values.pumpM3PerH)
	});
	errors = $derived(
		fieldMessages(checkAntechamberInput(this.input), { lowPa: 'lowMbar', highPa: 'highMbar' })
	);
	result = $derived.by(() => {
		if (!none(this.errors)) return null;
		const { lowPa, highPa, cycles, targetPpm } = this.input;
		return {
			...antechamberEstimate(this.input),
			o2Ppm: o2AfterCyclesPpm(lowPa, highPa, cycles),
			exactCycles: targetPpm === undefined ? null : cyclesForTarget(lowPa, highPa, targetPpm).exact
		};
	});
}

export class FlushCalc {
	values = $state({
		boxVolumeL: '1000',
		gloveVolumeL: '2',
		residualVolumeL: '0.2',
		cycles: String(RECOMMENDED_FLUSH_CYCLES)
	});

	input = $derived({
		boxVolumeL: numberFromText(this.values.boxVolumeL),
		gloveVolumeL: numberFromText(this.values.gloveVolumeL),
		residualVolumeL: numberFromText(this.values.residualVolumeL),
		cycles: numberFromText(this.values.cycles)
	});
	errors = $derived(fieldMessages(checkFlushInput(this.input)));
	result = $derived(none(this.errors) ? flushEstimate(this.input) : null);
}

/** One atmosphere, mbar: the box's pressure for the leak flow by the oxygen method. */
const ATMOSPHERE_MBAR = 1013.25;

export class LeakRateCalc {
	method = $state<'oxygen' | 'pressure'>('oxygen');
	readings = $state<'gauge' | 'absolute'>('gauge');
	requiredClass = $state<IsoClass>(1);
	values = $state<Record<keyof LeakReadings | 'volumeL', string>>({
		o2RisePpm: '100',
		minutes: '60',
		gauge1Mbar: '-10',
		gauge2Mbar: '-9.5',
		baro1Mbar: '1013.25',
		baro2Mbar: '1013.25',
		p1Mbar: '1003.25',
		p2Mbar: '1003.75',
		t1C: '20',
		t2C: '20',
		volumeL: '1000'
	});

	/** Which readings the domain converts: the O2 rise, gauge and barometer, or absolute. */
	kind: ReadingsMethod = $derived(this.method === 'oxygen' ? 'oxygen' : this.readings);
	input = $derived(
		leakInputFromReadings(
			this.kind,
			Object.fromEntries(
				Object.entries(this.values).map(([k, v]) => [k, numberFromText(v)])
			) as Partial<LeakReadings>
		)
	);
	/** The test's problems; the volume is only for the leak flow and stops nothing else. */
	testErrors = $derived(fieldMessages(checkLeakTest(this.input), readingFieldOf(this.kind)));
	volumeL = $derived(optional(this.values.volumeL));
	volumeError = $derived(
		this.volumeL === undefined ? undefined : boxVolumeProblem('volumeL', this.volumeL)?.message
	);
	errors: Record<string, string> = $derived({
		...this.testErrors,
		...(this.volumeError ? { volumeL: this.volumeError } : {})
	});
	result = $derived(none(this.testErrors) ? evaluateLeakTest(this.input) : null);
	meets = $derived(
		this.result ? meetsClass(this.result.hourlyLeakRate, this.requiredClass) : false
	);

	/** In gauge readings, a change the wrong way for the box's side of atmosphere is no leak. */
	wrongWay = $derived.by(() => {
		const change = this.result?.gasChangePerHour;
		if (change === undefined || this.kind !== 'gauge') return false;
		const gauge = numberFromText(this.values.gauge1Mbar);
		return (gauge < 0 && change < 0) || (gauge > 0 && change > 0);
	});
	/** Q needs the box's pressure: the start reading, or one atmosphere for the oxygen method. */
	flowPressureMbar = $derived(
		this.result?.method === 'pressure' ? this.result.inputs.p1Pa / PA_PER_MBAR : ATMOSPHERE_MBAR
	);
	flow = $derived(
		this.result && this.volumeL !== undefined && !this.volumeError
			? leakFlowMbarLPerS(this.result.hourlyLeakRate, this.volumeL, this.flowPressureMbar)
			: null
	);
}
