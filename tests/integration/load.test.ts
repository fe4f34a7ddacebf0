import { afterAll, describe, expect, it } from 'vitest';
import { runLoad } from '../../scripts/lib/load';
import { closeTestDb, createTeam } from '../factories';
import { env } from '../helpers/env';
import { signedIn } from '../helpers/http';

// The short version of `npm run load` (5 s, 20 connections) against the test app: it must serve every
// request without an error. Latency targets are measured by `npm run load`, not asserted here.
afterAll(closeTestDb);

describe('load (5 s)', () => {
	it('serves the trace-matrix API, a requirement page and the analysis API with no error', async () => {
		const team = await createTeam();
		const engineer = await signedIn(team.users.engineer.email, team.users.engineer.password);
		const res = await engineer.json(`/api/v1/projects/${team.project.key}/requirements`, 'POST', {
			title: 'Load target',
			statement: 'The loop shall remain absolutely stable for every gain in the sector [0, 2].',
			level: 'loop',
			assuranceLevel: 'C',
			methods: ['analysis']
		});
		expect(res.status).toBe(201);
		const r = await runLoad({
			baseUrl: env.baseUrl,
			email: team.users.certifier.email,
			password: team.users.certifier.password,
			projectKey: team.project.key,
			seconds: 5,
			connections: 20
		});
		console.log(
			`load 5 s x 20 connections: ${r.requests} requests, p50 ${r.latencyMs.p50} ms, p95 ${r.latencyMs.p95} ms, p99 ${r.latencyMs.p99} ms`
		);
		expect(r.requests).toBeGreaterThan(50);
		expect(r.errors).toBe(0);
		expect(r.non2xx).toBe(0);
	}, 60_000);
});
