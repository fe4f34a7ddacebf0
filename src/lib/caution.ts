// The caution every page and export that shows a verdict carries. One wording, used everywhere.
export const CAUTION_TITLE = 'Results support engineering judgement; they do not replace it';
export const CAUTION_TEXT =
	'Loopwarden’s verdicts support, and never replace, engineering judgement, the applicable certification ' +
	'authority and licensed professional practice. The circle and Popov criteria are sufficient conditions, ' +
	'not necessary ones: a failed check does not prove the loop unstable, and a passed check holds only for ' +
	'the linear model as entered, the sector as stated and the assumptions of the criterion.';
