import { redirect } from '@sveltejs/kit';
import { actorOf } from '$lib/server/audit';
import { access } from '$lib/server/auth';
import { ServiceError } from '$lib/server/errors';
import { completeProviderSigning, settleProviderSigning } from '$lib/server/identity/provider-signing';
import type { Signer } from '$lib/server/identity/reauth';
import { decideReview } from '$lib/server/requirements/review';
import { reviewEvidence } from '$lib/server/evidence/review';
import { changeFinding, parseChange } from '$lib/server/findings/service';
import { safeRedirect } from '$lib/server/safe-redirect';
import type { SigningChallengeRow } from '$lib/server/identity/signing-repo';
import type { PageServerLoad } from './$types';

// The identity provider's answer to a signing request (its redirect URI ORIGIN/signin/sign/callback):
// verified by identity/provider-signing.ts, then the pending act is done with that confirmation, under
// the same access rule as its form. The acts that accounts without a password can sign this way:
type Perform = (
	event: Parameters<PageServerLoad>[0],
	pending: SigningChallengeRow,
	signer: Signer
) => Promise<string>;
const ACTS: Record<string, Perform> = {
	'requirement.approve': decide,
	'requirement.return': decide,
	'evidence.accept': evidence,
	'evidence.reject': evidence,
	'finding.close': finding,
	'finding.defer': finding,
	'finding.not-a-defect': finding
};

async function finding(event: Parameters<PageServerLoad>[0], pending: SigningChallengeRow, signer: Signer) {
	const { resource, role } = await access(event, { finding: Number(pending.target_id) }, 'decideFindings');
	await changeFinding(actorOf(event.locals), role, resource.id, parseChange(pending.fields), signer);
	return safeRedirect(pending.return_to);
}

async function evidence(event: Parameters<PageServerLoad>[0], pending: SigningChallengeRow, signer: Signer) {
	const { resource, role, project } = await access(
		event,
		{ evidence: Number(pending.target_id) },
		'reviewEvidence'
	);
	await reviewEvidence({
		evidenceId: resource.id,
		project,
		actor: actorOf(event.locals),
		role,
		fields: pending.fields,
		signer
	});
	return safeRedirect(pending.return_to);
}

async function decide(event: Parameters<PageServerLoad>[0], pending: SigningChallengeRow, signer: Signer) {
	const { resource, role } = await access(
		event,
		{ requirement: Number(pending.target_id) },
		'reviewRequirements'
	);
	await decideReview(actorOf(event.locals), role, resource.id, pending.fields, signer);
	return safeRedirect(pending.return_to);
}

export const load = (async (event) => {
	const { user } = await access(event, 'account');
	const q = event.url.searchParams;
	let pending: SigningChallengeRow | null = null;
	try {
		const done = await completeProviderSigning(user, actorOf(event.locals), event.url.origin, {
			state: q.get('state'),
			code: q.get('code'),
			error: q.get('error')
		});
		pending = done.pending;
		const perform = ACTS[pending.act];
		if (!perform) throw new ServiceError(400, `${pending.act} cannot be signed at the identity provider.`);
		const to = await perform(event, pending, done.signer);
		await settleProviderSigning(Number(pending.id), 'signed');
		redirect(303, to);
	} catch (e) {
		if (!(e instanceof ServiceError)) throw e;
		if (pending) await settleProviderSigning(Number(pending.id), `act refused: ${e.message}`);
		return {
			message: e.message,
			back: safeRedirect(pending?.return_to ?? e.details.returnTo ?? '/')
		};
	}
}) satisfies PageServerLoad;
