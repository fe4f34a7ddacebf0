import {
	type Check,
	type Model,
	checkSchema,
	modelSchema,
	nyquistCurve,
	regionMargin
} from '../../stability/index';
import { type DecisionRegion, decisionRegions, testedCheck } from '../../verification/decision';
import { db } from '../db';
import { type Agreement, type SampledCheck, agreement, sampledSectorCheck } from './comparison';
import type { MeasuredResponse } from './frequency-response';
import { fileOf } from './read';
import { evidenceRepo as repo } from './repo';
import { toleranceFor } from './tolerance';

// A measured frequency response against each linked requirement: the sampled sector check (always
// labelled sampled) and the agreement with the model version in force.

export interface RequirementComparison {
	requirement: { id: number; identifier: string; title: string | null };
	/** Why there is nothing to compare (no specification, no model version ...), or null. */
	missing: string | null;
	spec: { id: number; version: number; check: Check } | null;
	model: { id: number; name: string; versionId: number; version: number; hash: string } | null;
	sampled: SampledCheck | null;
	tolerance: { relativeError: number; phaseDeg: number; isDefault: boolean };
	agreement: Agreement[];
	plot: {
		/** The region sampled against (the sector widened by the required margin) and the stated one. */
		regions: DecisionRegion[];
		modelCurves: { label: string; points: { re: number; im: number }[] }[];
		measured: { w: number; re: number; im: number; ok: boolean | null }[];
	};
}

/** For a measured-frequency-response revision: sampled sector check and agreement per linked requirement. */
export async function compareMeasured(
	evidenceId: number,
	revision?: number
): Promise<RequirementComparison[]> {
	const file = await fileOf(evidenceId, revision);
	const resp = file.response as MeasuredResponse | null;
	if (!resp) return [];
	const links = await repo.linksOfFiles(db(), [file.id]);
	const out: RequirementComparison[] = [];
	for (const l of links) {
		const tolerance = await toleranceFor(Number(l.id));
		const base: RequirementComparison = {
			requirement: { id: Number(l.id), identifier: l.identifier, title: l.title },
			missing: null,
			spec: null,
			model: null,
			sampled: null,
			tolerance,
			agreement: [],
			plot: {
				regions: [],
				modelCurves: [],
				measured: resp.points.map((p) => ({ w: p.w, re: p.re, im: p.im, ok: null }))
			}
		};
		if (!l.current_spec_id) {
			out.push({ ...base, missing: 'The requirement has no stability specification yet.' });
			continue;
		}
		const s = await repo.specWithModel(db(), l.current_spec_id);
		const check = s ? checkSchema.safeParse(s.check) : null;
		if (!s || !check?.success) {
			out.push({ ...base, missing: 'The specification could not be read.' });
			continue;
		}
		base.spec = { id: s.spec_id, version: s.spec_version, check: check.data };
		// Sampled against the sector the analysis decides with (the required margin applied), like the run.
		const tested = testedCheck(check.data, s.required_margin).decide;
		const sampled = sampledSectorCheck(resp.points, tested);
		base.sampled = sampled;
		if (check.data.type === 'circle' || check.data.type === 'popov') {
			base.plot.regions = decisionRegions(check.data, tested, s.required_margin);
		} else if (check.data.type === 'positive-real') {
			base.plot.regions = [
				{
					role: 'tested',
					sector: [0, Infinity],
					geometry: { kind: 'half-plane', boundary: 0, curveMust: 'stay-right' },
					label: 'positive real: Re G(jω) > 0'
				}
			];
		}
		if (sampled.region) {
			const region = sampled.region;
			base.plot.measured = resp.points.map((p) => {
				const m = regionMargin(region, p.re, p.im);
				return { w: p.w, re: p.re, im: p.im, ok: m > 0 };
			});
		}
		if (!s.model_version_id || s.model_version === null) {
			out.push({ ...base, missing: `Model ${s.model_name} has no version yet.` });
			continue;
		}
		base.model = {
			id: s.model_id,
			name: s.model_name,
			versionId: s.model_version_id,
			version: s.model_version,
			hash: s.model_hash ?? ''
		};
		const content = s.model_content as { operatingPoints?: { label: string; model: unknown }[] } | null;
		const points = (content?.operatingPoints ?? []).filter(
			(p) => !s.operating_points || s.operating_points.includes(p.label)
		);
		const wMin = resp.points[0].w;
		const wMax = resp.points[resp.points.length - 1].w;
		for (const op of points) {
			const m = modelSchema.safeParse(op.model);
			if (!m.success) continue;
			const model: Model = m.data;
			base.agreement.push(agreement(resp.points, model, tolerance, op.label));
			try {
				const curve = nyquistCurve(model, { wMin: wMin / 10, wMax: wMax * 10, maxPoints: 800 });
				base.plot.modelCurves.push({ label: op.label, points: curve.map((c) => ({ re: c.re, im: c.im })) });
			} catch {
				// A model the engine cannot draw still has its agreement figures.
			}
		}
		out.push(base);
	}
	return out;
}
