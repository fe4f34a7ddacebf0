import { CAUTION_TEXT } from '../../caution';
import {
	ANALYSIS_LOOK,
	analysisStateOf,
	notApplicableOf,
	type AnalysisState
} from '../../verification/index';
import type { Db } from '../db';
import { config } from '../config';
import { enqueueMail } from '../mail';
import {
	changeRuns,
	claimNotice,
	lockChange,
	noticeRecipients,
	openRunsOfChange,
	recordNotice
} from './repo';

// Verdict-change mail. A change (one publish, one specification edit...) queues many runs; when the last
// of them finishes, every requirement whose outcome moved is collected and each person concerned (the
// requirement's owner, the model's owner) gets one mail listing all of them.

// A run's outcome is the analysis state it gives (src/lib/verification), in the same words as every page.
type Outcome = AnalysisState;
const outcomeWords = (o: Outcome) => ANALYSIS_LOOK[o].label.toLowerCase();

interface FinishedRun {
	id: number;
	trigger_ref: string | null;
}

/** The analysis state a finished run gives (null while it is not finished); findings use it too. */
export function outcomeOf(r: {
	status: string;
	verdict: string | null;
	not_applicable?: unknown;
}): Outcome | null {
	if (r.status !== 'error' && !(r.status === 'done' && r.verdict)) return null;
	return analysisStateOf({
		specId: 0,
		modelVersionId: 0,
		run: {
			status: r.status,
			verdict: r.verdict,
			notApplicable: notApplicableOf({ notApplicable: r.not_applicable })
		}
	});
}

/**
 * Call in the transaction that finished a run. Returns how many mails were queued (call kickMail()
 * after the commit when > 0).
 */
export async function afterRunFinished(trx: Db, run: FinishedRun): Promise<number> {
	const ref = run.trigger_ref ?? `run:${run.id}`;
	// The finishers of one change take turns: the last one sees every other run committed.
	await lockChange(trx, ref);
	if (run.trigger_ref && (await openRunsOfChange(trx, run.trigger_ref)) > 0) return 0;
	if (!(await claimNotice(trx, ref))) return 0;

	const group = await changeRuns(
		trx,
		run.trigger_ref ? { triggerRef: run.trigger_ref } : { runId: Number(run.id) }
	);
	if (group.length === 0) return 0;

	const changes: { run: (typeof group)[number]; from: Outcome | null; to: Outcome }[] = [];
	for (const g of group) {
		const to = outcomeOf(g);
		if (!to) continue;
		const from = g.prev_status
			? outcomeOf({ status: g.prev_status, verdict: g.prev_verdict, not_applicable: g.prev_not_applicable })
			: null;
		// A first verdict counts as a change unless it is a pass (nothing to act on).
		if (from === to || (from === null && to === 'verified')) continue;
		changes.push({ run: g, from, to });
	}

	const byPerson = new Map<number, typeof changes>();
	for (const c of changes) {
		for (const uid of new Set([c.run.req_owner, c.run.model_owner])) {
			if (uid == null) continue;
			const list = byPerson.get(Number(uid)) ?? [];
			list.push(c);
			byPerson.set(Number(uid), list);
		}
	}
	let mails = 0;
	if (byPerson.size) {
		for (const person of await noticeRecipients(trx, [...byPerson.keys()])) {
			const list = byPerson.get(Number(person.id))!;
			const first = list[0].run;
			const subject =
				list.length === 1
					? `[${first.project_key}] ${first.identifier} is now ${outcomeWords(list[0].to)}`
					: `[${first.project_key}] ${list.length} verdicts changed after ${first.model_name} v${first.model_version}`;
			const lines = list.map((c) => {
				const url = `${config.publicOrigin}/p/${c.run.project_key}/requirements/${c.run.requirement_id}`;
				return (
					`- ${c.run.identifier} ${c.run.title}\n` +
					`  ${outcomeWords(c.from ?? 'not-analysed')} -> ${outcomeWords(c.to)}` +
					` (model ${c.run.model_name} v${c.run.model_version}${c.run.worst_point ? `, worst operating point "${c.run.worst_point}"` : ''})\n` +
					`  ${url}`
				);
			});
			const text =
				`Hello ${person.display_name},\n\n` +
				`Re-verification after a change (${first.trigger.replace('-', ' ')}) moved ${list.length === 1 ? 'a verdict' : `${list.length} verdicts`} you are concerned with:\n\n` +
				lines.join('\n\n') +
				`\n\nRun details: ${config.publicOrigin}/api/v1/analyses/${first.id}\n\n` +
				`${CAUTION_TEXT}\n\n-- Loopwarden\n`;
			await enqueueMail(trx, { to: person.email, subject, text });
			mails++;
		}
	}
	await recordNotice(trx, ref, { changes: changes.length, mails });
	return mails;
}
