// What each signed act means, in the signer's words, and what it does not mean. Stored with every
// signature (US 21 CFR Part 11 §11.50: a signature shows the signer's name, the date and time, and the
// meaning, as common practice). The methods page shows both columns.

export const SIGNED_ACTS = [
	'requirement.approve',
	'requirement.return',
	'evidence.accept',
	'evidence.reject',
	'finding.close',
	'finding.defer',
	'finding.not-a-defect',
	'baseline.release'
] as const;
export type SignedAct = (typeof SIGNED_ACTS)[number];

export const MEANINGS: Record<SignedAct, string> = {
	'requirement.approve': 'I approve this requirement revision as correct and verifiable.',
	'requirement.return':
		'I return this requirement revision for rework: I do not approve it, for the reasons in my comment.',
	'evidence.accept':
		'I confirm this evidence shows the requirement is met for the stated test article and configuration, and that the file I reviewed has the SHA-256 recorded here.',
	'evidence.reject':
		'I find that this evidence does not show the requirement is met for the stated test article and configuration; the reason is in my comment.',
	'finding.close': 'I confirm that the cause of this finding has been removed and close it.',
	'finding.defer':
		'I accept that this finding stays unresolved until the target date, for the justification given, and that baselines until then list it as deferred.',
	'finding.not-a-defect':
		'I declare, for the reason in my comment, that this finding does not describe a defect of the item.',
	'baseline.release':
		'I release this baseline: the manifest with the SHA-256 recorded here is the configuration of record.'
};

/** What a signature does not say: shown beside the meaning, so nobody reads more into it. */
export const NOT_MEANT: Record<SignedAct, string> = {
	'requirement.approve':
		'It does not say that the requirement is verified, nor that a later revision is approved: it applies to the signed revision only.',
	'requirement.return': 'It does not reject the need behind the requirement; a new revision may be approved.',
	'evidence.accept':
		'It does not cover another revision of the file, nor the analysis: a proved analysis and accepted evidence are separate records.',
	'evidence.reject':
		'It does not say the item fails its requirement; it says this file does not show that it is met.',
	'finding.close':
		'It does not say the requirement is verified; the verification state is still computed from analyses and evidence.',
	'finding.defer':
		'It does not close the finding: it stays listed, in the baselines too, until it is closed.',
	'finding.not-a-defect': 'It does not change the analysis or the evidence that raised the finding.',
	'baseline.release':
		'It is not a certification: Loopwarden is not a qualified tool (RTCA DO-330), and the release supports, not replaces, the applicable certification authority.'
};

/** Short words for lists ("approved", "returned" ...). */
export const ACT_LABELS: Record<SignedAct, string> = {
	'requirement.approve': 'approved',
	'requirement.return': 'returned for rework',
	'evidence.accept': 'accepted',
	'evidence.reject': 'rejected',
	'finding.close': 'closed',
	'finding.defer': 'deferred',
	'finding.not-a-defect': 'declared not a defect',
	'baseline.release': 'released'
};
