// The little of oidc-provider 9's API the identity-provider stand-in uses (the package ships no types).
declare module 'oidc-provider' {
	import type { IncomingMessage, ServerResponse } from 'node:http';

	interface Interaction {
		uid: string;
		prompt: { name: string; details: Record<string, unknown> };
		params: Record<string, unknown>;
		session?: { accountId?: string };
		grantId?: string;
	}
	interface Grant {
		addOIDCScope(scope: string): void;
		addOIDCClaims(claims: string[]): void;
		save(): Promise<string>;
	}
	export default class Provider {
		constructor(issuer: string, configuration: Record<string, unknown>);
		proxy: boolean;
		callback(): (req: IncomingMessage, res: ServerResponse) => void;
		interactionDetails(req: IncomingMessage, res: ServerResponse): Promise<Interaction>;
		interactionFinished(
			req: IncomingMessage,
			res: ServerResponse,
			result: Record<string, unknown>,
			options?: { mergeWithLastSubmission?: boolean }
		): Promise<void>;
		Grant: new (init: { accountId: string; clientId: string }) => Grant;
		on(event: string, listener: (...args: unknown[]) => void): this;
	}
}
