// A transfer function typed the way a person writes it, "66/((s+1.1)(s+3.5)(s+9))" or
// "(s+2)/(s^2+0.4s+4)", read into numerator and denominator coefficients. mathjs parses the text
// (implicit multiplication included); the rational function is then formed from the syntax tree in exact
// rational arithmetic (rational.ts), because mathjs's own rationalize() computes in binary floating point
// and would make the stored coefficients (and so the version's hash) depend on the order of the rounding.
//
// What "equal" means for the hash: every numeral is taken as the exact decimal it is written as (1.1 is
// 11/10), numerator and denominator are expanded exactly, sums of fractions are brought to their least
// common denominator as by hand, nothing written as a product or quotient is cancelled (a common factor
// you wrote stays, and the engine's hidden-mode check sees it), nothing is rescaled, and each final
// coefficient is rounded once to the nearest double. So "66/((s+1.1)(s+3.5)(s+9))" is stored as the tf
// { num: [66], den: [1, 13.6, 45.25, 34.65] }, the same content (and hash) as that tf typed as JSON.
import { bignumberDependencies, create, parseDependencies } from 'mathjs';
import {
	ONE,
	ZERO,
	addP,
	divQ,
	constP,
	decimalToQ,
	degreeP,
	divModP,
	gcdP,
	isZeroP,
	mulP,
	negP,
	toDouble,
	trimP,
	type Q,
	type QPoly
} from './rational';

const math = create({ parseDependencies, bignumberDependencies }, { number: 'BigNumber', precision: 64 });

/** Longest expression and highest degree accepted (the engine's models stay far below both). */
export const MAX_EXPRESSION_LENGTH = 2000;
export const MAX_DEGREE = 60;

export interface ExpressionProblem {
	/** 1-based character column in the text as typed. */
	column: number;
	message: string;
}

export type ExpressionResult =
	{ ok: true; num: number[]; den: number[] } | { ok: false; problem: ExpressionProblem };

interface RatFn {
	num: QPoly;
	den: QPoly;
}

// The part of mathjs's node shape read here (the library's own types are a wide union).
interface Node {
	type: string;
	name?: string;
	op?: string;
	fn?: string | Node;
	args?: Node[];
	content?: Node;
	value?: unknown;
	implicit?: boolean;
}

class Refusal extends Error {
	constructor(
		public column: number,
		message: string
	) {
		super(message);
	}
}

/** The start columns of identifiers and of one operator character in the text, in reading order. */
function tokenColumns(text: string) {
	const idents: number[] = [];
	const ops: Record<string, number[]> = { '^': [], '/': [] };
	// Numerals first, so the "e" of "1e-3" is not taken for a name.
	const re = /(\d+\.?\d*(?:[eE][+-]?\d+)?|\.\d+(?:[eE][+-]?\d+)?)|([A-Za-z_][A-Za-z0-9_]*)|([\^/])/g;
	for (let m = re.exec(text); m; m = re.exec(text)) {
		if (m[2]) idents.push(m.index + 1);
		else if (m[3]) ops[m[3]].push(m.index + 1);
	}
	return { idents, ops };
}

const poly = (p: QPoly): RatFn => ({ num: p, den: [ONE] });
const S: RatFn = poly([ZERO, ONE]);

function mul(a: RatFn, b: RatFn): RatFn {
	return { num: mulP(a.num, b.num), den: mulP(a.den, b.den) };
}

/** a + b over the least common denominator (lcm = a.den * b.den / gcd), as a sum is written by hand. */
function add(a: RatFn, b: RatFn): RatFn {
	const g = gcdP(a.den, b.den);
	const aq = divModP(a.den, g).quo;
	const bq = divModP(b.den, g).quo;
	return { num: addP(mulP(a.num, bq), mulP(b.num, aq)), den: mulP(a.den, bq) };
}

const neg = (a: RatFn): RatFn => ({ num: negP(a.num), den: a.den });

const words = (n: Node) => {
	const s = String((n as { toString(): string }).toString());
	return s.length > 30 ? s.slice(0, 27) + '…' : s;
};

/**
 * Read `text` as a ratio of polynomials in s. The problem, if any, names the column where it starts and
 * the reason in words.
 */
export function parseTransferExpression(textIn: string): ExpressionResult {
	// Typographic signs a person may paste: minus sign, multiplication dot and cross. One character each,
	// so columns stay those of the text as typed.
	const text = textIn.replace(/\u2212/g, '-').replace(/[\u00b7\u00d7\u22c5]/g, '*');
	if (!text.trim()) return { ok: false, problem: { column: 1, message: 'enter a transfer function in s' } };
	if (text.length > MAX_EXPRESSION_LENGTH)
		return {
			ok: false,
			problem: {
				column: MAX_EXPRESSION_LENGTH + 1,
				message: `use at most ${MAX_EXPRESSION_LENGTH} characters`
			}
		};
	let tree: Node;
	try {
		tree = math.parse(text) as unknown as Node;
	} catch (e) {
		const err = e as { char?: number; message?: string };
		const column = typeof err.char === 'number' ? Math.max(1, Math.min(err.char, text.length + 1)) : 1;
		const reason = String(err.message ?? 'cannot be read')
			.replace(/\s*\(char \d+\)\s*$/, '')
			.replace(/^Unexpected end of expression$/, 'the expression ends too early');
		return { ok: false, problem: { column, message: reason.charAt(0).toLowerCase() + reason.slice(1) } };
	}
	const cols = tokenColumns(text);
	let identSeen = 0;
	const opSeen: Record<string, number> = { '^': 0, '/': 0 };
	const identColumn = () => cols.idents[identSeen - 1] ?? 1;
	const opColumn = (op: string) => cols.ops[op][opSeen[op] - 1] ?? 1;

	const constant = (r: RatFn): Q | null =>
		degreeP(r.num) <= 0 && degreeP(r.den) === 0 ? (isZeroP(r.num) ? ZERO : divQ(r.num[0], r.den[0])) : null;

	function walk(node: Node): RatFn {
		switch (node.type) {
			case 'ParenthesisNode':
				return walk(node.content!);
			case 'ConstantNode': {
				const v = node.value as { toExponential?: () => string } | null;
				const exact = v && typeof v.toExponential === 'function' ? decimalToQ(v.toExponential()) : null;
				if (!exact) throw new Refusal(1, `${JSON.stringify(String(node.value))} is not a number`);
				return poly(constP(exact));
			}
			case 'SymbolNode': {
				identSeen++;
				if (node.name === 's') return S;
				throw new Refusal(
					identColumn(),
					`unknown symbol "${node.name}": write the transfer function in s only (numbers, s, + - * / ^ and brackets)`
				);
			}
			case 'FunctionNode': {
				identSeen++;
				const fn = node.fn as Node;
				const name = fn?.name ?? words(fn);
				const at = identColumn();
				// "s(s+1)": mathjs reads a name followed by brackets as a call; for s it is a product.
				if (name === 's' && node.args?.length === 1) return mul(S, walk(node.args[0]));
				if (name === 'exp')
					throw new Refusal(
						at,
						'exp(...) is not a polynomial term: a transfer function here is a ratio of polynomials in s (a transport delay e^(-sT) cannot be entered)'
					);
				throw new Refusal(
					at,
					`${name}(...) is not a polynomial term: a transfer function here is a ratio of polynomials in s`
				);
			}
			case 'OperatorNode': {
				const args = node.args ?? [];
				if (node.fn === 'unaryMinus') return neg(walk(args[0]));
				if (node.fn === 'unaryPlus') return walk(args[0]);
				if (args.length !== 2 || !['add', 'subtract', 'multiply', 'divide', 'pow'].includes(String(node.fn)))
					throw new Refusal(
						columnOf(String(node.op)),
						`the operator "${node.op}" is not allowed: use + - * / ^ and brackets`
					);
				const left = walk(args[0]);
				if (node.fn === 'divide' || node.fn === 'pow') opSeen[node.fn === 'divide' ? '/' : '^']++;
				const opAt = node.fn === 'divide' ? opColumn('/') : node.fn === 'pow' ? opColumn('^') : 1;
				const right = walk(args[1]);
				switch (node.fn) {
					case 'add':
						return add(left, right);
					case 'subtract':
						return add(left, neg(right));
					case 'multiply':
						return mul(left, right);
					case 'divide':
						if (isZeroP(right.num))
							throw new Refusal(opAt, `division by zero: the divisor ${words(args[1])} is zero`);
						return { num: mulP(left.num, right.den), den: mulP(left.den, right.num) };
					default: {
						const k = constant(right);
						if (!k || k.d !== 1n)
							throw new Refusal(
								opAt,
								`the power ${words(args[1])} is not a whole number: only whole powers of s are polynomial terms`
							);
						const e = Number(k.n);
						if (Math.abs(e) > MAX_DEGREE)
							throw new Refusal(opAt, `the power ${e} is above ${MAX_DEGREE}, the highest degree accepted`);
						if (e < 0 && isZeroP(left.num))
							throw new Refusal(opAt, `${words(args[0])} is zero and cannot have a negative power`);
						let out: RatFn = poly([ONE]);
						for (let i = 0; i < Math.abs(e); i++) out = mul(out, left);
						return e < 0 ? { num: out.den, den: out.num } : out;
					}
				}
			}
			default:
				throw new Refusal(
					columnOf(words(node).charAt(0)),
					`${words(node)} is not part of a transfer function: use numbers, s, + - * / ^ and brackets`
				);
		}
	}
	// For a construct we do not track token by token: where its first character first appears.
	function columnOf(token: string) {
		const i = text.indexOf(token);
		return i >= 0 ? i + 1 : 1;
	}

	try {
		const r = walk(tree);
		const num = trimP(r.num);
		const den = trimP(r.den);
		if (!den.length) return { ok: false, problem: { column: 1, message: 'the denominator is zero' } };
		if (den.length - 1 > MAX_DEGREE)
			return {
				ok: false,
				problem: {
					column: 1,
					message: `degree ${den.length - 1} is above ${MAX_DEGREE}, the highest accepted`
				}
			};
		const toNumbers = (p: QPoly, what: string): number[] => {
			const out = (p.length ? p : [ZERO]).map(toDouble).reverse();
			const bad = out.findIndex((x) => !Number.isFinite(x) || (x !== 0 && Math.abs(x) < 2 ** -1022));
			if (bad >= 0)
				throw new Refusal(
					1,
					`the ${what} coefficient of s^${out.length - 1 - bad} is outside the range of numbers`
				);
			return out;
		};
		return { ok: true, num: toNumbers(num, 'numerator'), den: toNumbers(den, 'denominator') };
	} catch (e) {
		if (e instanceof Refusal) return { ok: false, problem: { column: e.column, message: e.message } };
		throw e;
	}
}

/** A polynomial (coefficients highest power first) written back in s: "s^3 + 13.6 s^2 + 45.25 s + 34.65". */
export function polynomialText(coeffs: readonly number[]): string {
	const deg = coeffs.length - 1;
	const terms: string[] = [];
	coeffs.forEach((c, i) => {
		const p = deg - i;
		if (c === 0 && !(deg === 0)) return;
		const mag = Math.abs(c);
		const power = p === 0 ? '' : p === 1 ? 's' : `s^${p}`;
		const num = mag === 1 && p > 0 ? '' : String(mag);
		const body = num && power ? `${num} ${power}` : num || power;
		terms.push(terms.length === 0 ? (c < 0 ? `-${body}` : body) : `${c < 0 ? '-' : '+'} ${body}`);
	});
	return terms.length ? terms.join(' ') : '0';
}

/** A tf written as an expression that reads back to exactly the same coefficients (String(x) round-trips). */
export function tfExpression(num: readonly number[], den: readonly number[]): string {
	const tight = (c: readonly number[]) => polynomialText(c).replace(/(\d) s/g, '$1s');
	const n = tight(num);
	const d = tight(den);
	if (d === '1') return n;
	const nTerms = num.filter((x) => x !== 0).length;
	return `${nTerms > 1 ? `(${n})` : n}/(${d})`;
}
