import { ENGINE_VERSION } from '../../../src/lib/stability/index';
import {
	createEvidence,
	createModel,
	createModelVersion,
	createRequirement,
	createRun,
	createSpec,
	createTeam,
	linkRequirements
} from '../../factories';

// A small project whose expected trace-matrix states follow by hand from the one verification rule
// (src/lib/verification, issue 12): each requirement is built to land in one state. The tree is
// r1 <- r2 <- {r3, r4}; r5, r6, r7 stand alone.
export async function buildScenario() {
	const team = await createTeam();
	const pid = team.project.id;
	const eng = team.users.engineer;
	const model = await createModel(pid, { name: 'Yaw damper', ownerId: team.users.analyst.id });
	const v1 = await createModelVersion(model.id);

	const r1 = await createRequirement(pid, {
		title: 'Yaw loop absolute stability',
		level: 'system',
		assurance: 'A',
		methods: ['analysis', 'test'],
		ownerId: eng.id,
		statement:
			'The yaw loop shall remain absolutely stable for every time-invariant gain in the sector [0, 2].'
	});
	await createSpec(r1.id, {
		modelId: model.id,
		check: { type: 'popov', sector: [0, 2] },
		requiredMargin: 0.2
	});
	const run1 = await createRun(r1.id, {
		engineVersion: ENGINE_VERSION,
		verdict: 'pass',
		result: { type: 'popov', verdict: 'pass', threshold: 3.125, numbers: {}, explanation: 'ok' },
		worstPoint: 'nominal'
	});
	const ev1 = await createEvidence(pid, [r1.id], {
		title: 'Yaw rig sweep',
		review: 'accepted',
		reviewer: team.users.certifier
	});

	const r2 = await createRequirement(pid, {
		title: 'Rudder actuator sector',
		level: 'subsystem',
		assurance: 'B',
		ownerId: eng.id,
		statement:
			'The rudder loop shall remain absolutely stable for every actuator gain in the sector [0.5, 4].'
	});
	await linkRequirements(r2.id, r1.id);
	await createSpec(r2.id, { modelId: model.id, check: { type: 'circle', sector: [0.5, 4] } });
	const run2 = await createRun(r2.id, {
		engineVersion: ENGINE_VERSION,
		verdict: 'fail',
		result: { type: 'circle', verdict: 'fail', margin: -0.25, numbers: {}, explanation: 'enters the disk' }
	});

	const r3 = await createRequirement(pid, { title: 'Servo loop re-check', level: 'loop', assurance: 'C' });
	await linkRequirements(r3.id, r2.id);
	await createSpec(r3.id, { modelId: model.id });

	const r4 = await createRequirement(pid, {
		title: 'Rig gain check',
		level: 'loop',
		assurance: 'C',
		methods: ['test'],
		statement: 'The loop shall stay stable for gains up to TBD.'
	});
	await linkRequirements(r4.id, r2.id);
	const ev4a = await createEvidence(pid, [r4.id], {
		title: 'First sweep',
		review: 'rejected',
		reviewer: team.users.certifier
	});
	const ev4b = await createEvidence(pid, [r4.id], { title: 'Second sweep' });

	const r5 = await createRequirement(pid, {
		title: 'Flight test yaw damping',
		level: 'system',
		assurance: 'A',
		methods: ['test']
	});
	const ev5 = await createEvidence(pid, [r5.id], {
		title: 'Flight log 12',
		review: 'accepted',
		reviewer: team.users.certifier
	});

	const r6 = await createRequirement(pid, {
		title: 'Inner loop margins',
		level: 'loop',
		assurance: 'D',
		ownerId: team.users.analyst.id,
		statement: 'The inner loop shall have at least 6 dB of gain margin with at least 45° of phase margin.'
	});
	await createSpec(r6.id, {
		modelId: model.id,
		check: { type: 'margins', minGainMarginDb: 6, minPhaseMarginDeg: 45 }
	});
	await createRun(r6.id, {
		engineVersion: ENGINE_VERSION,
		verdict: 'pass',
		result: {
			type: 'margins',
			verdict: 'pass',
			numbers: { gainMarginDb: 12.5, phaseMarginDeg: 60 },
			explanation: 'ok'
		}
	});

	const r7 = await createRequirement(pid, {
		title: 'Harness inspection',
		level: 'loop',
		assurance: 'E',
		methods: ['inspection']
	});

	return {
		team,
		model,
		v1,
		reqs: { r1, r2, r3, r4, r5, r6, r7 },
		runs: { run1, run2 },
		evidence: { ev1, ev4a, ev4b, ev5 },
		expectedStates: {
			// its own analysis and test are satisfied, but its derived r2 is not verified (nor r3, r4 below it)
			[r1.identifier]: 'blocked',
			// the circle criterion did not prove it
			[r2.identifier]: 'not-proved',
			// no run yet for the current inputs
			[r3.identifier]: 'pending',
			// TBD in the statement, rejected evidence (and evidence awaiting review)
			[r4.identifier]: 'blocked',
			[r5.identifier]: 'verified',
			[r6.identifier]: 'verified',
			// inspection named, no evidence
			[r7.identifier]: 'not-covered'
		} as Record<string, string>,
		expectedLabels: {
			[r5.identifier]: 'Verified by test',
			[r6.identifier]: 'Verified by analysis'
		} as Record<string, string>
	};
}
