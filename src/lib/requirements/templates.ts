// Specification templates: common ways of stating what "stable enough" means for a loop with a
// nonlinear element, turned into the engine's check. Pure (browser and server).
// Sources: classical gain/phase margins are common practice (6 dB, 45 degrees); the gain-margin tiers
// follow MIL-F-9490D (from memory, not re-read); sectors from the circle criterion, Khalil, Nonlinear
// Systems, 3rd ed., section 7.1.

export type SpecCheck =
	| { type: 'circle'; sector: [number, number] }
	| { type: 'popov'; sector: [number, number] }
	| { type: 'positive-real' }
	| { type: 'margins'; minGainMarginDb?: number; minPhaseMarginDeg?: number };

export interface SpecTemplate {
	id: string;
	label: string;
	/** What it models and where the numbers come from. */
	explanation: string;
	check: SpecCheck;
	/** Suggested wording for the statement, consistent with the check. */
	statement: string;
}

/** Gain factor of a dB figure: 20·log10(k) = dB (the definition of the decibel for an amplitude ratio). */
export const gainOfDb = (db: number) => Math.pow(10, db / 20);
export const dbOfGain = (k: number) => 20 * Math.log10(k);

const floorTo = (v: number, digits: number) => Math.floor(v * 10 ** digits + 1e-9) / 10 ** digits;
const ceilTo = (v: number, digits: number) => Math.ceil(v * 10 ** digits - 1e-9) / 10 ** digits;

/**
 * The sector [1/k, k] that holds a gain uncertain by ±db around a unit nominal gain, k = 10^(db/20).
 * Bounds are rounded outward to `digits` decimals so the stated sector covers the whole uncertainty
 * (±6 dB: [0.501, 1.996]; the often-quoted 1.995 covers only +5.998 dB).
 */
export function sectorOfDb(db: number, digits = 3): [number, number] {
	const k = gainOfDb(Math.abs(db));
	return [floorTo(1 / k, digits), ceilTo(k, digits)];
}

/**
 * Phase margin (degrees) guaranteed by the sector [1/k, k]: the disk with diameter [-k, -1/k] meets the
 * unit circle where cos φ = (1 + 1) / (k + 1/k) (the law of cosines on the disk).
 */
export function phaseMarginOfSector(k: number): number {
	return (Math.acos(2 / (k + 1 / k)) * 180) / Math.PI;
}

/** A gain known to within -low %/+high % of nominal lies in [1 - low/100, 1 + high/100] times nominal. */
export function sectorOfPercent(lowPercent: number, highPercent: number): [number, number] {
	return [round(1 - Math.abs(lowPercent) / 100, 6), round(1 + Math.abs(highPercent) / 100, 6)];
}

const round = (v: number, digits: number) => Math.round(v * 10 ** digits) / 10 ** digits;

function gainTemplate(db: number): SpecTemplate {
	const sector = sectorOfDb(db);
	const pm = phaseMarginOfSector(gainOfDb(db));
	return {
		id: `gain-${db}db`,
		label: `±${db} dB gain uncertainty → circle [${sector[0]}, ${sector[1]}]`,
		explanation:
			`A loop gain uncertain by ±${db} dB around nominal lies in the sector [10^(−${db}/20), 10^(${db}/20)]. ` +
			`The circle criterion on that sector also guarantees about ${pm.toFixed(1)}° of phase margin ` +
			`(arccos(2 / (k + 1/k)): where the disk of Khalil, Nonlinear Systems, 3rd ed., section 7.1 meets the unit circle). Bounds rounded outward.`,
		check: { type: 'circle', sector },
		statement: `The loop shall remain absolutely stable for every loop gain in [${sector[0]}, ${sector[1]}] times nominal (±${db} dB).`
	};
}

export const SPEC_TEMPLATES: SpecTemplate[] = [
	gainTemplate(6),
	gainTemplate(8),
	{
		id: 'saturation-circle',
		label: 'Unit saturation or dead-zone → circle [0, 1]',
		explanation:
			'A saturation or a dead-zone of unit slope lies in the sector [0, 1] (Khalil, Nonlinear ' +
			'Systems, 3rd ed., section 7.1). The circle criterion also covers time-varying elements in that sector.',
		check: { type: 'circle', sector: [0, 1] },
		statement: 'The loop shall remain absolutely stable with the actuator saturation in the sector [0, 1].'
	},
	{
		id: 'saturation-popov',
		label: 'Unit saturation, time-invariant → Popov [0, 1]',
		explanation:
			'For a time-invariant saturation or dead-zone in [0, 1] the Popov criterion (Khalil, Theorem 7.3) is less ' +
			'conservative than the circle criterion. It needs a Hurwitz plant.',
		check: { type: 'popov', sector: [0, 1] },
		statement:
			'The loop shall remain absolutely stable with the time-invariant actuator saturation in the sector [0, 1].'
	},
	{
		id: 'gain-50-80',
		label: 'Gain −50 %/+80 % of nominal → circle [0.5, 1.8]',
		explanation:
			'An actuator gain known to within −50 %/+80 % of nominal lies in [0.5, 1.8] times the nominal gain ' +
			'(the sector condition k1 y² ≤ y φ(y) ≤ k2 y², Khalil, Nonlinear Systems, 3rd ed., section 7.1).',
		check: { type: 'circle', sector: sectorOfPercent(50, 80) },
		statement:
			'The loop shall remain absolutely stable for every actuator gain in [0.5, 1.8] times nominal (−50 %/+80 %).'
	},
	{
		id: 'margins-6-45',
		label: 'Classical margins 6 dB / 45°',
		explanation:
			'Gain margin at least 6 dB and phase margin at least 45° for a single loop: the widely cited figure, traced ' +
			'to MIL-F-9490D, Flight Control Systems: Design, Installation and Test of Piloted Aircraft (succeeded by ' +
			'SAE AS94900); common practice.',
		check: { type: 'margins', minGainMarginDb: 6, minPhaseMarginDeg: 45 },
		statement: 'The loop shall have at least 6 dB of gain margin with at least 45° of phase margin.'
	},
	{
		id: 'margins-4.5-30',
		label: 'Margins 4.5 dB / 30° (modes below 0.06 Hz)',
		explanation:
			'The lower MIL-F-9490D tier for modes below 0.06 Hz (quoted from memory: confirm against MIL-F-9490D ' +
			'or SAE AS94900 before relying on it).',
		check: { type: 'margins', minGainMarginDb: 4.5, minPhaseMarginDeg: 30 },
		statement: 'The loop shall have at least 4.5 dB of gain margin with at least 30° of phase margin.'
	},
	{
		id: 'margins-8-60',
		label: 'Margins 8 dB / 60° (above the first aeroelastic mode)',
		explanation:
			'The upper MIL-F-9490D tier for modes above the first aeroelastic mode (quoted from memory: confirm ' +
			'against MIL-F-9490D or SAE AS94900 before relying on it).',
		check: { type: 'margins', minGainMarginDb: 8, minPhaseMarginDeg: 60 },
		statement: 'The loop shall have at least 8 dB of gain margin with at least 60° of phase margin.'
	},
	{
		id: 'passive',
		label: 'Passive driving point → positive real',
		explanation:
			'Driving-point functions of passive networks (force to velocity, voltage to current) are positive real; ' +
			'with dissipation strictly so (Khalil, Nonlinear Systems, 3rd ed., section 6.1 and Lemma 6.1).',
		check: { type: 'positive-real' },
		statement: 'The converter admittance shall be positive real.'
	}
];

export function templateById(id: string | null | undefined): SpecTemplate | undefined {
	return SPEC_TEMPLATES.find((t) => t.id === id);
}
