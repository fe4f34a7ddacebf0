// The checks Loopwarden decides and the published sources they rest on, in one list for the exports
// that must name them without the web app (the data package's report appendix). Theorem numbers are
// given from memory, as on the methods page; confirm them against the book.

export interface MethodSource {
	check: string;
	what: string;
	source: string;
}

export const METHOD_SOURCES: readonly MethodSource[] = [
	{
		check: 'Circle criterion, sector [k1, k2]',
		what: 'Absolute stability for every nonlinearity in the sector, time-varying ones included: Z(s) = (1 + k2 G(s)) / (1 + k1 G(s)) strictly positive real; all three sector cases (0 < k1 < k2, k1 = 0, k1 < 0 < k2).',
		source:
			'H. K. Khalil, Nonlinear Systems, 3rd ed., Prentice Hall 2002, section 7.1 (Theorems 7.1 and 7.2, numbers from memory).'
	},
	{
		check: 'Popov criterion, sector [0, k]',
		what: 'Time-invariant nonlinearities and a Hurwitz, strictly proper G: some q >= 0 makes 1/k + Re[(1 + jwq) G(jw)] > 0 for every w.',
		source: 'Khalil, Nonlinear Systems, 3rd ed., section 7.1 (Theorem 7.3, number from memory).'
	},
	{
		check: 'Positive real / strictly positive real',
		what: 'Whether G is the transfer function of a passive (PR) or strictly passive (SPR) system.',
		source:
			'Khalil, Nonlinear Systems, 3rd ed., Definition 6.4 and Lemmas 6.1 and 6.3 (Kalman-Yakubovich-Popov lemma).'
	},
	{
		check: 'Largest provable sector',
		what: 'For a lower bound k1 the largest k2 the circle criterion proves, bracketed by a passed and a failed exact test; beside it the linear gain range.',
		source: 'Khalil, Nonlinear Systems, 3rd ed., section 7.1; the gain range from the Nyquist criterion.'
	},
	{
		check: 'Exact decision',
		what: 'Hurwitz tests by fraction-free Routh arrays in exact rational arithmetic; the frequency condition Re Z(jw) > 0 as a real polynomial in x = w^2, decided by real-root isolation (Descartes rule of signs with bisection) with a floating-point filter and exact fallback.',
		source:
			'E. J. Routh, A Treatise on the Stability of a Given State of Motion (1877); G. E. Collins and A. G. Akritas, Polynomial real root isolation using Descartes rule of signs, SYMSAC 1976.'
	},
	{
		check: 'Classical margins',
		what: 'Gain and phase margins with their crossover frequencies from polynomial roots, for comparison with the single-loop figures of common practice (6 dB, 45 degrees).',
		source: 'Common practice (MIL-F-9490D, succeeded by SAE AS94900; from memory).'
	},
	{
		check: 'Integrity',
		what: 'Every file, manifest, model version and run output is identified by its SHA-256 over the bytes (canonical JSON: keys sorted, no whitespace).',
		source: 'NIST FIPS 180-4, Secure Hash Standard.'
	}
];
