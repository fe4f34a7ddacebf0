import { describe, expect, it } from 'vitest';
import { inspectBody, refusal } from '../../src/lib/server/input-guard';
import { decodeDevalue } from '../helpers/http';

const form = (body: string) =>
	new Request('http://x/a', {
		method: 'POST',
		headers: { 'content-type': 'application/x-www-form-urlencoded' },
		body
	});
const json = (body: string) =>
	new Request('http://x/a', { method: 'POST', headers: { 'content-type': 'application/json' }, body });

describe('input guard', () => {
	it('names a form field holding a NUL character and leaves clean forms alone', async () => {
		expect(await inspectBody(form('title=ok&statement=a%00b'))).toEqual({
			field: 'statement',
			message: 'Text may not contain the NUL character (U+0000).'
		});
		expect(await inspectBody(form('title=ok&statement=The+loop+shall+remain+stable'))).toBeNull();
	});

	it('refuses reserved keys in forms and in JSON at any depth, and over-deep JSON', async () => {
		expect((await inspectBody(form('__proto__=1')))?.field).toBe('__proto__');
		expect((await inspectBody(json('{"a":{"b":[{"__proto__":{"x":1}}]}}')))?.field).toBe('a.b.0.__proto__');
		expect((await inspectBody(json('{"note":"x\\u0000y"}')))?.field).toBe('note');
		let deep = '"x"';
		for (let i = 0; i < 100; i++) deep = `{"a":${deep}}`;
		expect((await inspectBody(json(deep)))?.message).toMatch(/nested too deeply/);
		expect(await inspectBody(json('{"note":"fine","points":[1,2,3]}'))).toBeNull();
		expect(await inspectBody(json('{not json'))).toBeNull();
	});

	it('leaves the body readable for the route', async () => {
		const r = form('a=1');
		await inspectBody(r);
		expect(await r.text()).toBe('a=1');
	});

	it('answers in the caller’s format: JSON error, enhanced-form failure, or a page', async () => {
		const p = { field: 'title', message: 'Text may not contain the NUL character (U+0000).' };
		const api = refusal(p, 'api');
		expect(api.status).toBe(400);
		expect((await api.json()).error.fields.title).toBe(p.message);
		const action = await refusal(p, 'action').json();
		expect(action.type).toBe('failure');
		const data = decodeDevalue(action.data);
		expect((data.errors as Record<string, string>).title).toBe(p.message);
		const page = refusal({ field: '<b>', message: 'x' }, 'page');
		expect(await page.text()).not.toContain('<b>');
	});
});

describe('body size', () => {
	it('refuses announced non-upload bodies over the limit, and leaves uploads to their route', async () => {
		const { oversized, MAX_NON_UPLOAD_BODY } = await import('../../src/lib/server/input-guard');
		const big = String(MAX_NON_UPLOAD_BODY + 1);
		const req = (type: string, length: string) =>
			new Request('http://x/a', {
				method: 'POST',
				headers: { 'content-type': type, 'content-length': length }
			});
		expect(oversized(req('application/json', big))).toBe(true);
		expect(oversized(req('application/x-www-form-urlencoded', big))).toBe(true);
		expect(oversized(req('multipart/form-data; boundary=x', big))).toBe(false);
		expect(oversized(req('application/json', '100'))).toBe(false);
	});
});
