import { json } from '@sveltejs/kit';
import { endpoint } from '$lib/server/api';
import { actorOf } from '$lib/server/audit';
import { access } from '$lib/server/auth';
import { db } from '$lib/server/db';
import { listEvidence, uploadEvidence } from '$lib/server/evidence/service';
import { verificationOf } from '$lib/server/verification/service';
import type { RequestHandler } from './$types';

// GET: the project's evidence (filters: kind, review, requirement). With ?requirement=<id> the answer
// also carries that requirement's verification state (`requirement`: the one combined state, its
// blockers, the evidence state per method).
export const GET = endpoint(async (event) => {
	const q = event.url.searchParams;
	// The same form as the id matcher (src/params/id.ts).
	const byId = /^[1-9][0-9]{0,14}$/.test(q.get('requirement') ?? '');
	const reqId = Number(q.get('requirement'));
	// With a requirement id, its combined state is answered too: only for a requirement of this project.
	const { project } = await access(
		event,
		byId ? { project: event.params.key!, requirement: reqId } : { project: event.params.key! }
	);
	const list = await listEvidence(project.id, {
		kind: q.get('kind') ?? undefined,
		review: q.get('review') ?? undefined,
		requirement: q.get('requirement') ?? undefined
	});
	let requirement = null;
	if (byId) {
		const v = (await verificationOf(db(), { requirementIds: [reqId] })).get(reqId);
		// Only a requirement of this project: another project's state is not told through this URL.
		if (v && v.projectId === project.id)
			requirement = {
				state: v.state,
				label: v.label,
				symbol: v.symbol,
				how: v.how,
				analysis: v.analysis,
				evidence: v.evidence,
				evidenceCounts: v.evidenceCounts,
				blockers: v.blockers.map((b) => ({ kind: b.kind, text: b.text, ref: b.ref ?? null }))
			};
	}
	return json({ evidence: list.rows, requirement }, { headers: { 'cache-control': 'no-store' } });
}) satisfies RequestHandler;

// POST multipart/form-data: `file` plus title, kind, requirementIds (comma-separated identifiers or ids),
// optional method, testArticle, testDate (YYYY-MM-DD), note, frequencyUnit, magnitudeUnit, layout.
export const POST = endpoint(async (event) => {
	const { project } = await access(event, { project: event.params.key! }, 'uploadEvidence');
	const record = await uploadEvidence({
		project,
		actor: actorOf(event.locals),
		headers: event.request.headers,
		body: event.request.body
	});
	return json(record, { status: 201, headers: { location: `/api/v1/evidence/${record.id}` } });
}) satisfies RequestHandler;
