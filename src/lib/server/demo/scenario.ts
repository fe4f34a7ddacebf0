// The demo scenario: an invented electric tilt-wing air taxi, VX7. Every name and number here is made
// up for the demo; none of it is reference data. The plants are simple rational models chosen so
// that the story reads well: the wing-tilt actuator's second version adds a lightly damped wing-torsion
// mode found in an (invented) ground vibration test, and its requirement turns from verified to failing.

type Tf = { kind: 'tf'; num: number[]; den: number[] };
type Zpk = { kind: 'zpk'; zeros: [number, number][]; poles: [number, number][]; gain: number };
type EngineModel = Tf | Zpk;

const mul = (a: number[], b: number[]) => {
	const r = new Array(a.length + b.length - 1).fill(0);
	a.forEach((x, i) => b.forEach((y, j) => (r[i + j] += x * y)));
	return r.map((v) => Math.round(v * 1e9) / 1e9);
};
const lag = (p: number) => [1, p];
const mode = (w: number, zeta: number) => [1, 2 * zeta * w, w * w];
const tf = (num: number[], ...factors: number[][]): Tf => ({
	kind: 'tf',
	num,
	den: factors.reduce(mul, [1])
});

export interface DemoModel {
	key: string;
	name: string;
	description: string;
	versions: { note: string; operatingPoints: { label: string; model: EngineModel }[] }[];
}

export const DEMO_MODELS: DemoModel[] = [
	{
		key: 'elevon',
		name: 'Elevon actuator, left outboard',
		description:
			'Electromechanical elevon actuator position loop, seen from the motor torque limiter (the nonlinear element).',
		versions: [
			{
				note: 'Initial model from the actuator supplier data sheet.',
				operatingPoints: [{ label: 'hover, 20 C', model: tf([60], lag(1), lag(4), lag(10)) }]
			},
			{
				note: 'Motor constant updated after bench characterisation.',
				operatingPoints: [{ label: 'hover, 20 C', model: tf([72], lag(1.2), lag(4), lag(10)) }]
			},
			{
				note: 'Second operating point: cruise at -20 C (stiffer grease, slower motor).',
				operatingPoints: [
					{ label: 'hover, 20 C', model: tf([72], lag(1.2), lag(4), lag(10)) },
					{ label: 'cruise, -20 C', model: tf([66], lag(1.1), lag(3.5), lag(9)) }
				]
			}
		]
	},
	{
		key: 'tilt',
		name: 'Wing-tilt actuator',
		description:
			'Ball-screw wing-tilt actuator loop with a rate-limited motor drive; gain uncertain over temperature.',
		versions: [
			{
				note: 'Rigid-wing model for preliminary design.',
				operatingPoints: [{ label: 'transition, 20 C', model: tf([12], lag(0.8), lag(3), lag(5)) }]
			},
			{
				note: 'Ground vibration test: first wing torsion mode at 7.5 rad/s with 0.6 % damping added.',
				operatingPoints: [
					{
						label: 'transition, 20 C',
						model: tf([12 * 7.5 * 7.5], lag(0.8), lag(3), lag(5), mode(7.5, 0.006))
					}
				]
			}
		]
	},
	{
		key: 'governor',
		name: 'Propeller speed governor, rotor 1',
		description:
			'Rotor speed loop from the motor current limiter to shaft speed; the limiter is time-invariant.',
		versions: [
			{
				note: 'First-principles model.',
				operatingPoints: [{ label: 'hover', model: tf([9], lag(0.5), lag(2), lag(6)) }]
			},
			{
				note: 'Propeller inertia from the blade supplier.',
				operatingPoints: [{ label: 'hover', model: tf([10.5], lag(0.55), lag(2), lag(6)) }]
			}
		]
	},
	{
		key: 'dclink',
		name: 'Battery DC-link converter',
		description:
			'Input admittance of the DC-link converter seen from the high-voltage bus (passivity check).',
		versions: [
			{
				note: 'Averaged converter model.',
				operatingPoints: [{ label: 'nominal bus voltage', model: tf([1, 3, 2], [1, 2, 5]) }]
			},
			{
				note: 'Input filter capacitor changed.',
				operatingPoints: [{ label: 'nominal bus voltage', model: tf([1, 2.6, 2], [1, 1.6, 6]) }]
			}
		]
	},
	{
		key: 'yaw',
		name: 'Yaw damper',
		description: 'Yaw-rate damper loop through the rudder-vane actuator; margins and a gain sector.',
		versions: [
			{
				note: 'Linearised at 60 kn.',
				operatingPoints: [
					{
						label: '60 kn',
						model: {
							kind: 'zpk',
							zeros: [[-0.5, 0]],
							poles: [
								[-0.2, 0],
								[-1.5, 1.2],
								[-1.5, -1.2]
							],
							gain: 1.8
						}
					}
				]
			},
			{
				note: 'Added 110 kn cruise linearisation.',
				operatingPoints: [
					{
						label: '60 kn',
						model: {
							kind: 'zpk',
							zeros: [[-0.5, 0]],
							poles: [
								[-0.2, 0],
								[-1.5, 1.2],
								[-1.5, -1.2]
							],
							gain: 1.8
						}
					},
					{
						label: '110 kn',
						model: {
							kind: 'zpk',
							zeros: [[-0.5, 0]],
							poles: [
								[-0.25, 0],
								[-1.6, 1.4],
								[-1.6, -1.4]
							],
							gain: 2.1
						}
					}
				]
			}
		]
	}
];

export interface DemoRequirement {
	ref: string;
	title: string;
	statement: string;
	rationale: string;
	level: 'system' | 'subsystem' | 'loop';
	dal: 'A' | 'B' | 'C' | 'D' | 'E';
	methods: ('analysis' | 'test' | 'inspection' | 'demonstration')[];
	status: 'draft' | 'in-review' | 'approved';
	parents: string[];
	spec?: { model: string; check: Record<string, unknown>; requiredMargin?: number; template?: string };
}

const sys = (
	ref: string,
	title: string,
	statement: string,
	rationale: string,
	dal: DemoRequirement['dal'],
	methods: DemoRequirement['methods']
): DemoRequirement => ({
	ref,
	title,
	statement,
	rationale,
	level: 'system',
	dal,
	methods,
	status: 'approved',
	parents: []
});

export const DEMO_REQUIREMENTS: DemoRequirement[] = [
	sys(
		'S1',
		'Flight-control actuation stays absolutely stable',
		'Each flight-control actuation loop shall remain absolutely stable for every actuator gain inside its declared sector.',
		'Loss of a control surface loop is catastrophic; the actuator gain varies with temperature, wear and supply voltage.',
		'A',
		['analysis', 'test']
	),
	sys(
		'S2',
		'Propulsion speed control stays absolutely stable',
		'Each propeller speed governor shall remain absolutely stable for every current-limiter characteristic inside its declared sector.',
		'Speed oscillation of one rotor couples into attitude in hover.',
		'A',
		['analysis', 'test']
	),
	sys(
		'S3',
		'High-voltage bus loads are passive',
		'Every converter connected to the high-voltage bus shall present a strictly positive-real input admittance.',
		'Interconnected passive loads cannot destabilise the bus, whatever their number.',
		'B',
		['analysis', 'test']
	),
	sys(
		'S4',
		'Lateral-directional loops keep classical margins',
		'The yaw damper loop shall keep a gain margin of at least 6 dB and a phase margin of at least 45 degrees in every flight phase.',
		'Common practice for single loops (MIL-F-9490D heritage).',
		'A',
		['analysis']
	),
	sys(
		'S5',
		'Stability claims are backed by tests',
		'Every absolute-stability claim on an actuation loop shall be supported by a frequency-response test of the installed configuration.',
		'Analyses hold only for models that match the hardware.',
		'B',
		['test', 'inspection']
	)
];

const sub = (
	ref: string,
	parents: string[],
	title: string,
	statement: string,
	rationale: string,
	dal: DemoRequirement['dal'],
	methods: DemoRequirement['methods'],
	status: DemoRequirement['status'] = 'approved'
): DemoRequirement => ({
	ref,
	title,
	statement,
	rationale,
	level: 'subsystem',
	dal,
	methods,
	status,
	parents
});

DEMO_REQUIREMENTS.push(
	sub(
		'D1',
		['S1'],
		'Elevon actuation stability',
		'The elevon actuation subsystem shall remain absolutely stable for every motor torque gain in the sector [0.4, 1.8].',
		'Torque gain spread from the supplier: -60 % / +80 %.',
		'A',
		['analysis', 'test']
	),
	sub(
		'D2',
		['S1'],
		'Wing-tilt actuation stability',
		'The wing-tilt actuation subsystem shall remain absolutely stable for every drive gain in the sector [0.5, 3.5].',
		'Cold-soak tests showed drive gain up to 3.5 times nominal.',
		'A',
		['analysis', 'test']
	),
	sub(
		'D3',
		['S2'],
		'Rotor 1 governor stability',
		'The rotor 1 speed governor shall remain absolutely stable for every current-limiter gain in the sector [0, 2.5].',
		'The limiter is a static, time-invariant saturation.',
		'A',
		['analysis']
	),
	sub(
		'D4',
		['S3'],
		'DC-link converter passivity',
		'The battery DC-link converter shall present a strictly positive-real input admittance at the nominal bus voltage.',
		'Derived from the bus passivity rule.',
		'B',
		['analysis', 'test']
	),
	sub(
		'D5',
		['S4'],
		'Yaw damper margins',
		'The yaw damper loop shall keep at least 6 dB of gain margin and 45 degrees of phase margin at 60 kn and at 110 kn.',
		'Flight phases from the flight envelope document.',
		'A',
		['analysis']
	),
	sub(
		'D6',
		['S5'],
		'Elevon rig frequency response',
		'The elevon actuator shall be characterised on the iron-bird rig by a frequency-response test from 0.1 rad/s to 60 rad/s.',
		'Model validation for D1.',
		'B',
		['test']
	),
	sub(
		'D7',
		['S5'],
		'Wing-tilt rig frequency response',
		'The wing-tilt actuator shall be characterised on the wing rig by a frequency-response test from 0.1 rad/s to 40 rad/s.',
		'Model validation for D2.',
		'B',
		['test']
	),
	sub(
		'D8',
		['S1'],
		'Elevon gain sector with 6 dB uncertainty',
		'The elevon loop shall remain absolutely stable for every gain in the sector [0.501, 1.995].',
		'Circle-criterion counterpart of a 6 dB gain uncertainty.',
		'A',
		['analysis']
	),
	sub(
		'D9',
		['S2'],
		'Rotor 1 governor at cold start',
		'The rotor 1 speed governor shall remain absolutely stable for every limiter gain in the sector [0, 2.5] at -20 C.',
		'TBD: cold-start model not yet delivered by the supplier.',
		'B',
		['analysis'],
		'draft'
	),
	sub(
		'D10',
		['S3'],
		'DC-link converter passivity after filter change',
		'The DC-link converter shall remain strictly positive-real after any change of its input filter.',
		'Changes are frequent during integration.',
		'C',
		['analysis'],
		'in-review'
	)
);

const loop = (
	ref: string,
	parents: string[],
	title: string,
	statement: string,
	rationale: string,
	dal: DemoRequirement['dal'],
	spec?: DemoRequirement['spec'],
	methods: DemoRequirement['methods'] = ['analysis'],
	status: DemoRequirement['status'] = 'approved'
): DemoRequirement => ({
	ref,
	title,
	statement,
	rationale,
	level: 'loop',
	dal,
	methods,
	status,
	parents,
	spec
});

DEMO_REQUIREMENTS.push(
	loop(
		'L1',
		['D1'],
		'Elevon loop circle criterion',
		'The elevon position loop shall remain absolutely stable for every torque gain in the sector [0.4, 1.8].',
		'Circle criterion: covers time-varying gains.',
		'A',
		{ model: 'elevon', check: { type: 'circle', sector: [0.4, 1.8] }, requiredMargin: 0.2 }
	),
	loop(
		'L2',
		['D8'],
		'Elevon loop under 6 dB gain uncertainty',
		'The elevon position loop shall remain absolutely stable for every gain in the sector [0.501, 1.995].',
		'Template: 6 dB gain uncertainty.',
		'A',
		{ model: 'elevon', check: { type: 'circle', sector: [0.501, 1.995] }, template: 'gain-6db' }
	),
	loop(
		'L3',
		['D1'],
		'Elevon loop classical margins',
		'The elevon position loop shall keep at least 6 dB of gain margin and 45 degrees of phase margin.',
		'Common practice single-loop margins.',
		'A',
		{ model: 'elevon', check: { type: 'margins', minGainMarginDb: 6, minPhaseMarginDeg: 45 } }
	),
	loop(
		'L4',
		['D2'],
		'Wing-tilt loop circle criterion',
		'The wing-tilt position loop shall remain absolutely stable for every drive gain in the sector [0.5, 3.5].',
		'The structural modes of the wing must be included in the model.',
		'A',
		{ model: 'tilt', check: { type: 'circle', sector: [0.5, 3.5] } },
		['analysis', 'test']
	),
	loop(
		'L5',
		['D2'],
		'Wing-tilt loop margins',
		'The wing-tilt position loop shall keep at least 6 dB of gain margin and 45 degrees of phase margin.',
		'Common practice single-loop margins.',
		'A',
		{ model: 'tilt', check: { type: 'margins', minGainMarginDb: 6, minPhaseMarginDeg: 45 } }
	),
	loop(
		'L6',
		['D3'],
		'Governor Popov criterion',
		'The rotor 1 speed loop shall remain absolutely stable for every time-invariant limiter in the sector [0, 2.5].',
		'Popov criterion: the limiter is static and time-invariant.',
		'A',
		{ model: 'governor', check: { type: 'popov', sector: [0, 2.5] } }
	),
	loop(
		'L7',
		['D3'],
		'Governor circle criterion',
		'The rotor 1 speed loop shall remain absolutely stable for every limiter gain in the sector [0, 2.5], time-varying or not.',
		'Covers a limiter whose threshold changes in flight.',
		'B',
		{ model: 'governor', check: { type: 'circle', sector: [0, 2.5] } }
	),
	loop(
		'L8',
		['D4'],
		'DC-link admittance strictly positive-real',
		'The DC-link converter input admittance shall be strictly positive-real.',
		'KYP lemma: a strictly passive load.',
		'B',
		{ model: 'dclink', check: { type: 'positive-real' } },
		['analysis', 'test']
	),
	loop(
		'L9',
		['D5'],
		'Yaw damper margins at both speeds',
		'The yaw damper loop shall keep at least 6 dB of gain margin and 45 degrees of phase margin at every operating point.',
		'Derived from D5.',
		'A',
		{ model: 'yaw', check: { type: 'margins', minGainMarginDb: 6, minPhaseMarginDeg: 45 } }
	),
	loop(
		'L10',
		['D5'],
		'Yaw damper gain sector',
		'The yaw damper loop shall remain absolutely stable for every vane actuator gain in the sector [0.501, 1.995].',
		'Template: 6 dB gain uncertainty.',
		'A',
		{ model: 'yaw', check: { type: 'circle', sector: [0.501, 1.995] }, template: 'gain-6db' }
	),
	loop(
		'L11',
		['D6'],
		'Elevon rig test',
		'The elevon frequency response measured on the iron-bird rig shall agree with the model within 10 percent in magnitude and 5 degrees in phase.',
		'Model validation.',
		'B',
		undefined,
		['test']
	),
	loop(
		'L12',
		['D7'],
		'Wing-tilt rig test',
		'The wing-tilt frequency response measured on the wing rig shall agree with the model within 10 percent in magnitude and 5 degrees in phase.',
		'Model validation.',
		'B',
		undefined,
		['test']
	),
	loop(
		'L13',
		['D10'],
		'DC-link passivity, second filter',
		'The DC-link converter input admittance with the revised input filter shall be strictly positive-real.',
		'Re-check after the filter change.',
		'C',
		{ model: 'dclink', check: { type: 'positive-real' } }
	),
	loop(
		'L14',
		['D1'],
		'Elevon largest proved sector',
		'The elevon position loop shall remain absolutely stable for every torque gain in the sector [0, 3.0].',
		'Headroom for a stronger motor option.',
		'B',
		{ model: 'elevon', check: { type: 'circle', sector: [0, 3.0] } }
	),
	loop(
		'L15',
		['D9'],
		'Governor cold start',
		'The rotor 1 speed loop at -20 C shall remain absolutely stable for every limiter gain in the sector [0, TBD].',
		'Waiting for the cold-start model.',
		'B',
		undefined,
		['analysis'],
		'draft'
	)
);
