import { describe, expect, it } from 'vitest';
import { Client } from '../helpers/http';

describe('GET /api/v1/health', () => {
	it('answers 200 with every dependency ok', async () => {
		const res = await new Client().get('/api/v1/health');
		const body = await res.json();
		// The checks in the message, so a failure says which dependency was not ok.
		expect(res.status, JSON.stringify(body.checks)).toBe(200);
		expect(body.status).toBe('ok');
		expect(body.checks.database).toBe('ok');
		expect(body.checks.mail).toBe('ok');
	});

	it('sends the security headers', async () => {
		const res = await new Client().get('/', { accept: 'text/html' });
		expect(res.headers.get('x-content-type-options')).toBe('nosniff');
		expect(res.headers.get('content-security-policy') ?? '').toMatch(/frame-ancestors 'none'/);
	});
});
