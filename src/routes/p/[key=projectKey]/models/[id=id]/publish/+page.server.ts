import { fail, redirect } from '@sveltejs/kit';
import { actorOf } from '$lib/server/audit';
import { access, inAddress } from '$lib/server/auth';
import { ServiceError, type FieldErrors } from '$lib/server/errors';
import { MODEL_FILE_FORMAT } from '$lib/server/models/schema';
import {
	getModel,
	getVersion,
	listRequirementsUsing,
	parsePublish,
	publishVersion
} from '$lib/server/models/service';
import type { Actions, PageServerLoad } from './$types';

const EXAMPLE = [{ label: 'nominal', model: { kind: 'tf', num: [1], den: [1, 1] } }];

export const load = (async (event) => {
	const { project, resource } = await access(event, inAddress(event.params, 'model'), 'writeModels');
	const m = await getModel(project.id, resource.id);
	const latest = m.latest_version > 0 ? await getVersion(project.id, m.id, m.latest_version) : null;
	const reqs = await listRequirementsUsing(m.id);
	return {
		project: { key: project.key, name: project.name },
		model: { id: Number(m.id), name: m.name, latestVersion: m.latest_version },
		fileFormat: MODEL_FILE_FORMAT,
		initialPoints: JSON.stringify(latest ? latest.content.operatingPoints : EXAMPLE, null, 2),
		// Every requirement whose specification uses this model: the preview decides each on the new
		// version in the browser, with the same engine and the same tested sector as the worker.
		requirements: reqs.map((r) => ({
			identifier: r.identifier,
			title: r.title,
			check: r.check as unknown,
			requiredMargin: r.required_margin === null ? null : Number(r.required_margin),
			operatingPoints: r.operating_points,
			pinnedVersion: r.pinned_version === null ? null : Number(r.pinned_version)
		}))
	};
}) satisfies PageServerLoad;

/** Field errors of the engine's paths ("operatingPoints.0.model.den") shown under the operating points. */
function publishErrors(e: ServiceError): FieldErrors {
	const errors: FieldErrors = { _: e.message };
	const details = Object.entries(e.fields);
	if (details.length) {
		errors.operatingPoints = details.map(([k, v]) => `${k}: ${v}`).join('\n');
		if (e.fields.note) errors.note = e.fields.note;
	}
	return errors;
}

export const actions = {
	publish: async (event) => {
		const { project, resource } = await access(event, inAddress(event.params, 'model'), 'writeModels');
		const modelId = resource.id;
		const form = await event.request.formData();
		const values = {
			note: String(form.get('note') ?? ''),
			operatingPoints: String(form.get('operatingPoints') ?? '')
		};
		const file = form.get('file');
		let body: unknown;
		try {
			if (file instanceof File && file.size > 0) {
				if (file.size > 2_000_000)
					return fail(413, { action: 'publish', values, errors: { file: 'The file is larger than 2 MB.' } });
				let parsed: unknown;
				try {
					parsed = JSON.parse(await file.text());
				} catch (err) {
					return fail(400, {
						action: 'publish',
						values,
						errors: { file: `The file is not valid JSON: ${(err as Error).message}` }
					});
				}
				const fromFile = parsePublish(parsed, { file: true });
				body = { note: values.note.trim() || fromFile.note, operatingPoints: fromFile.operatingPoints };
			} else {
				let points: unknown;
				try {
					points = JSON.parse(values.operatingPoints);
				} catch (err) {
					return fail(400, {
						action: 'publish',
						values,
						errors: { operatingPoints: `The operating points are not valid JSON: ${(err as Error).message}` }
					});
				}
				body = { note: values.note, operatingPoints: points };
			}
			const r = await publishVersion(actorOf(event.locals), project.id, modelId, body);
			redirect(
				303,
				`/p/${project.key}/models/${modelId}/v/${r.version.version}${r.created ? '' : '?unchanged=1'}`
			);
		} catch (e) {
			if (e instanceof ServiceError) {
				const errors = publishErrors(e);
				if (file instanceof File && file.size > 0 && errors.operatingPoints)
					errors.file = errors.operatingPoints;
				return fail(e.status, { action: 'publish', values, errors });
			}
			throw e;
		}
	}
} satisfies Actions;
