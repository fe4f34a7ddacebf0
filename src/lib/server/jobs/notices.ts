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

// Verdict-change mail. A change (one publish, one specification edit...) queues many runs; when the last
// of them finishes, every requirement whose outcome moved is collected and each person concerned (the
// requirement's owner, the model's owner) gets one mail listing all of them.

// A run's outcome is the analysis state it gives (src/lib/verification), in the same words as every page.
type Outcome = AnalysisState;
const outcomeWords = (o: Outcome) => ANALYSIS_LOOK[o].label.toLowerCase();

// Two-key advisory lock namespace (the audit chain uses the one-key form).
const NOTICE_LOCK = 7_431_003;

interface FinishedRun {
	id: number;
	trigger_ref: string | null;
}

function outcomeOf(r: { status: string; verdict: string | null; not_applicable?: unknown }): Outcome | null {
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
	// Serialise the finishers of one change: the last one sees every other run committed.
	await trx.raw('select pg_advisory_xact_lock(?, hashtext(?))', [NOTICE_LOCK, ref]);
	if (run.trigger_ref) {
		const open = await trx('analysis_runs')
			.where({ trigger_ref: run.trigger_ref })
			.whereIn('status', ['queued', 'running'])
			.count<{ count: string | number }[]>('* as count');
		if (Number(open[0].count) > 0) return 0;
	}
	const claimed = await trx.raw(
		`insert into analysis_notices (trigger_ref, changes, mails) values (?, 0, 0) on conflict do nothing returning trigger_ref`,
		[ref]
	);
	if (claimed.rows.length === 0) return 0;

	// Each run of the change with the outcome before it: the requirement's newest finished run outside
	// this change that finished no later than it.
	const group: {
		id: number;
		requirement_id: number;
		status: string;
		verdict: string | null;
		worst_point: string | null;
		identifier: string;
		title: string;
		req_owner: number | null;
		model_owner: number | null;
		model_name: string;
		model_version: number;
		project_key: string;
		trigger: string;
		prev_status: string | null;
		prev_verdict: string | null;
		not_applicable: unknown;
		prev_not_applicable: unknown;
	}[] = (
		await trx.raw(
			`with g as (select * from analysis_runs where ${run.trigger_ref ? 'trigger_ref = ?' : 'id = ?'})
			select g.id, g.requirement_id, g.status, g.verdict, g.worst_point, g.trigger,
				g.result -> 'notApplicable' as not_applicable, prev.not_applicable as prev_not_applicable,
				r.identifier, rr.title, rr.owner_id as req_owner, m.owner_id as model_owner, m.name as model_name,
				mv.version as model_version, p.key as project_key, prev.status as prev_status, prev.verdict as prev_verdict
			from g
			join requirements r on r.id = g.requirement_id
			join requirement_revisions rr on rr.requirement_id = r.id and rr.revision = r.current_revision
			join model_versions mv on mv.id = g.model_version_id
			join models m on m.id = mv.model_id
			join projects p on p.id = g.project_id
			left join lateral (
				select x.status, x.verdict, x.result -> 'notApplicable' as not_applicable from analysis_runs x
				where x.requirement_id = g.requirement_id and x.status in ('done', 'error')
					and x.id not in (select id from g) and x.finished_at <= g.finished_at
				order by x.finished_at desc, x.id desc limit 1
			) prev on true
			order by r.number`,
			[run.trigger_ref ?? run.id]
		)
	).rows;
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
		const people: { id: number; email: string; display_name: string }[] = await trx('users')
			.whereIn('id', [...byPerson.keys()])
			.where({ disabled: false })
			.select('id', 'email', 'display_name');
		for (const person of people) {
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
	await trx('analysis_notices').where({ trigger_ref: ref }).update({ changes: changes.length, mails });
	return mails;
}
