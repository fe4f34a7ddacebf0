import type { RequestEvent } from '@sveltejs/kit';
import { recordEvent } from '../audit';
import { config } from '../config';
import { db } from '../db';
import { ServiceError } from '../errors';
import { verifyPassword } from '../passwords';
import { signInAttempts, users } from './repo';
import { PROVIDER_REAUTH_METHOD } from './signing-rules';

// Confirming who signs, at the moment of signing (US 21 CFR Part 11 §11.200(a): a signature made of
// an identification and a password re-entered at signing, as common practice). The signature service
// accepts only a ConfirmedSigner made here, so no signed act can skip this step. The proof is the
// password, or, for an account that signs in only through the identity provider (no Loopwarden
// password), a fresh login there bound to one pending signature (identity/provider-signing.ts, which
// alone calls confirmedByProviderLogin).

/** What the signer presents. */
export type SignerProof = { password: string };

const CONFIRMED: unique symbol = Symbol('confirmed signer');

/** Proof that this user was confirmed just now. Only confirmSigner() makes one. */
export interface ConfirmedSigner {
	readonly [CONFIRMED]: true;
	readonly userId: number;
	/** 'password' (re-entered at signing) or PROVIDER_REAUTH_METHOD. */
	readonly method: string;
	readonly at: number;
	/** For a provider re-authentication: the one signature it confirms (the signature service checks it). */
	readonly binding?: { act: string; targetType: string; targetId: number; revision: number };
}

/** How long a confirmation stays usable: one request's worth. */
const FRESH_MS = 60_000;

export const WRONG_SIGNING_PASSWORD = 'That is not your password: nothing was signed and nothing changed.';

/**
 * Confirm the signer. `event` may be null (scripts, the demo seed). Refuses with 400 (field
 * `password`) when the proof is wrong, 429 after too many failures (the sign-in rate limit). A refused
 * attempt is recorded (sign-in attempts and the audit trail): nothing else changes.
 */
export async function confirmSigner(
	event: RequestEvent | null,
	user: { id: number; email: string },
	proof: SignerProof | null | undefined
): Promise<ConfirmedSigner> {
	const password = typeof proof?.password === 'string' ? proof.password : '';
	const account = await users.byId(db(), user.id);
	// An account made by single sign-on has no password to re-enter: say so instead of "wrong password".
	if (account && !account.password_hash)
		throw new ServiceError(
			400,
			'Your account signs in through the identity provider and has no Loopwarden password. This act is not yet signed by a fresh login at the identity provider (requirement and evidence reviews and finding decisions on their pages are); ask a colleague with a password account, or an administrator.',
			{ password: 'No Loopwarden password on this account.' }
		);
	if (!password)
		throw new ServiceError(400, 'Enter your password to sign.', {
			password: 'Enter your password to sign.'
		});
	const failures = await signInAttempts.recentFailures(db(), user.email, config.signInWindowMinutes);
	if (failures >= config.signInMaxFailures)
		throw new ServiceError(
			429,
			`Too many wrong passwords for this address. Wait ${config.signInWindowMinutes} minutes.`
		);
	const ok = !!account && !account.disabled && (await verifyPassword(account.password_hash, password));
	if (!ok) {
		const ip = event?.request.headers.get('x-forwarded-for') ?? null;
		await db().transaction(async (trx) => {
			await signInAttempts.record(trx, user.email, false, ip);
			await recordEvent(
				trx,
				{ userId: user.id, label: user.email, requestId: event?.locals.requestId ?? null },
				{
					action: 'signature.refused',
					subjectType: 'user',
					subjectId: user.id,
					after: { reason: 'password' }
				}
			);
		});
		throw new ServiceError(400, WRONG_SIGNING_PASSWORD, { password: 'Not your password.' });
	}
	return { [CONFIRMED]: true, userId: user.id, method: 'password', at: Date.now() };
}

/**
 * A confirmation by a fresh login at the identity provider that identity/provider-signing.ts has
 * verified (ID token, nonce, state, subject, auth_time) for exactly this pending signature.
 */
export function confirmedByProviderLogin(
	userId: number,
	binding: NonNullable<ConfirmedSigner['binding']>
): ConfirmedSigner {
	return { [CONFIRMED]: true, userId, method: PROVIDER_REAUTH_METHOD, at: Date.now(), binding };
}

/** The signature service's check: a confirmation of this very user, made moments ago by confirmSigner. */
export function isConfirmed(
	c: ConfirmedSigner | null | undefined,
	userId: number | null | undefined
): boolean {
	return !!c && c[CONFIRMED] === true && c.userId === userId && Date.now() - c.at <= FRESH_MS;
}

/** A confirmed signer, as the signature service takes it. */
export interface Signer {
	id: number;
	email: string;
	name: string;
	confirmation: ConfirmedSigner;
}

/**
 * Confirm the signed-in user of a request from the submitted fields (`password`), for a form action or
 * an API body. Scripts call confirmSigner directly.
 */
export async function signerOf(
	event: RequestEvent | null,
	user: { id: number; email: string; display_name: string },
	fields: Record<string, unknown>
): Promise<Signer> {
	const password = typeof fields.password === 'string' ? fields.password : '';
	const confirmation = await confirmSigner(event, user, { password });
	return { id: user.id, email: user.email, name: user.display_name, confirmation };
}
