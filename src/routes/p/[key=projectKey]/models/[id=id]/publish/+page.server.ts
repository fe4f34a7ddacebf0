import { fail, redirect } from '@sveltejs/kit';
import { actorOf } from '$lib/server/audit';
import { access, inAddress } from '$lib/server/auth';
import { ServiceError, type FieldErrors } from '$lib/server/errors';
import { formErrors } from '$lib/forms/errors';
import { parseJsonText } from '$lib/forms/json-text';
import { modelIssuesInWords } from '$lib/forms/model-issue';
import {
	buildPoints,
	entriesFromForm,
	entryFieldName,
	entryFromModel,
	issueInPlace,
	issueText,
	pointsFromCsv,
	type EntryIssue,
	type EntryPoint
} from '$lib/models/entry';
import { MAX_OPERATING_POINTS, MODEL_FILE_FORMAT } from '$lib/server/models/schema';
import {
	getModel,
	getVersion,
	listRequirementsUsing,
	parsePublish,
	publishVersion
} from '$lib/server/models/service';
import type { Actions, PageServerLoad } from './$types';

const EXAMPLE = [{ label: 'nominal', model: { kind: 'tf' as const, num: [1], den: [1, 1] } }];

/** Problems of points typed one by one: each in place under its field, the top message counts them. */
function entryErrors(issues: EntryIssue[], prefix?: (i: EntryIssue) => string): FieldErrors {
	const fields: FieldErrors = {};
	for (const i of issues) {
		const key = entryFieldName(i.point, i.field);
		const line = prefix ? prefix(i) : issueInPlace(i);
		fields[key] = fields[key] ? `${fields[key]}\n${line}` : line;
	}
	return formErrors('', fields, 'Nothing was published');
}

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
		// The same points for entry point by point, each in the form of its kind (a tf as an expression).
		initialEntries: (latest ? latest.content.operatingPoints : EXAMPLE).map((p) =>
			entryFromModel(p.label, p.model as Parameters<typeof entryFromModel>[1])
		),
		initialMode: event.url.searchParams.get('entry') === 'json' ? ('json' as const) : ('points' as const),
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

/**
 * The engine's problems in the user's words, each once, under the operating points (and the note); the
 * message at the top only says how many there are (formErrors), so nothing is shown twice.
 */
function publishErrors(e: ServiceError, points: unknown): FieldErrors {
	const { note, ...rest } = e.fields;
	const lines = modelIssuesInWords(rest, points);
	const fields: FieldErrors = {};
	if (lines.length) fields.operatingPoints = lines.join('\n');
	if (note) fields.note = note;
	return formErrors(e.message, fields, 'Nothing was published');
}

export const actions = {
	publish: async (event) => {
		const { project, resource } = await access(event, inAddress(event.params, 'model'), 'writeModels');
		const modelId = resource.id;
		const form = await event.request.formData();
		const mode: 'points' | 'json' = form.get('mode') === 'points' ? 'points' : 'json';
		const entries: EntryPoint[] =
			mode === 'points'
				? entriesFromForm((n) => {
						const v = form.get(n);
						return typeof v === 'string' ? v : null;
					}, MAX_OPERATING_POINTS)
				: [];
		const values = {
			note: String(form.get('note') ?? ''),
			operatingPoints: String(form.get('operatingPoints') ?? ''),
			mode,
			entries
		};
		const file = form.get('file');
		let body: unknown;
		// The operating points as submitted, so a problem can name the point by its label.
		let submitted: unknown;
		try {
			if (file instanceof File && file.size > 2_000_000)
				return fail(413, { action: 'publish', values, errors: { file: 'The file is larger than 2 MB.' } });
			if (file instanceof File && file.size > 0 && /\.csv$/i.test(file.name)) {
				// Our CSV layout (models/entry/csv.ts): one operating point per row.
				const csv = pointsFromCsv(await file.text());
				if (!csv.ok)
					return fail(400, {
						action: 'publish',
						values,
						errors: {
							file: `Line ${csv.problem.row}${csv.problem.column ? `, column ${csv.problem.column}` : ''}: ${csv.problem.message}.`
						}
					});
				const read = buildPoints(csv.points);
				if (!read.points)
					return fail(400, {
						action: 'publish',
						values,
						errors: formErrors(
							'',
							{ file: read.issues.map((i) => `Line ${csv.lines[i.point]}: ${issueText(i)}`).join('\n') },
							'Nothing was published'
						)
					});
				submitted = read.points;
				body = { note: values.note, operatingPoints: read.points };
			} else if (file instanceof File && file.size > 0) {
				const parsed = parseJsonText(await file.text());
				if (!parsed.ok)
					return fail(400, {
						action: 'publish',
						values,
						errors: { file: `The file is not valid JSON: ${parsed.message}.` }
					});
				submitted = (parsed.value as { operatingPoints?: unknown } | null)?.operatingPoints;
				const fromFile = parsePublish(parsed.value, { file: true });
				body = { note: values.note.trim() || fromFile.note, operatingPoints: fromFile.operatingPoints };
			} else if (mode === 'points') {
				// Typed point by point: read by the same pure module as the live preview.
				const read = buildPoints(entries);
				if (!entries.length)
					return fail(400, {
						action: 'publish',
						values,
						errors: { _: 'Give at least one operating point.' }
					});
				if (!read.points) return fail(400, { action: 'publish', values, errors: entryErrors(read.issues) });
				submitted = read.points;
				body = { note: values.note, operatingPoints: read.points };
			} else {
				const parsed = parseJsonText(values.operatingPoints);
				if (!parsed.ok)
					return fail(400, {
						action: 'publish',
						values,
						errors: { operatingPoints: `The operating points are not valid JSON: ${parsed.message}.` }
					});
				submitted = parsed.value;
				body = { note: values.note, operatingPoints: parsed.value };
			}
			const r = await publishVersion(actorOf(event.locals), project.id, modelId, body);
			redirect(
				303,
				`/p/${project.key}/models/${modelId}/v/${r.version.version}${r.created ? '' : '?unchanged=1'}`
			);
		} catch (e) {
			if (e instanceof ServiceError) {
				const errors = publishErrors(e, submitted);
				// The points came from the file: the problems are shown under the file, once.
				if (file instanceof File && file.size > 0 && errors.operatingPoints) {
					errors.file = errors.operatingPoints;
					delete errors.operatingPoints;
				}
				return fail(e.status, { action: 'publish', values, errors });
			}
			throw e;
		}
	}
} satisfies Actions;
