import { execFileSync } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { renderReport } from '../../../src/lib/server/packages/report';
import { VERDICT_LOOK } from '../../../src/lib/verification/index';
import { packageContentFixture } from '../../factories/package-content';

// The report on generated content (no database), read back with Debian's poppler-utils: a draft is
// marked on every page, every page says "Page n of N", and each contents line points at the page that
// starts its section. The runs are the engine's (computeRun); the expected verdict words are the ones
// the fixture's manifest holds.
const dir = mkdtempSync(join(process.env.TMPDIR ?? tmpdir(), 'report-unit-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe('renderReport', () => {
	it('lays out a draft with its contents, running heads and DRAFT mark on every page', async () => {
		const { content } = packageContentFixture(5, { draft: true });
		const r = await renderReport(content);
		const file = join(dir, 'draft.pdf');
		writeFileSync(file, r.pdf);
		const pages = execFileSync('pdftotext', ['-layout', file, '-'], { encoding: 'utf8' }).split('\f');
		// pdftotext ends the last page with a form feed too.
		expect(pages.length - 1).toBe(r.pages);
		for (let n = 1; n <= r.pages; n++) {
			expect(pages[n - 1]).toContain('DRAFT');
			expect(pages[n - 1]).toContain(`Page ${n} of ${r.pages}`);
		}
		const sections = r.toc.filter((e) => e.title !== 'Contents');
		expect(sections.map((e) => e.title)).toEqual([
			'Summary',
			'Release',
			'Findings',
			'Trace matrix',
			'Requirements',
			...content.manifest.requirements.map((q) => `${q.identifier} ${q.title}`),
			'Appendix A. Methods and their published sources',
			'Appendix B. Model versions',
			'Appendix C. Environment'
		]);
		for (const e of sections) {
			expect(pages[1]).toMatch(
				new RegExp(`${e.title.slice(0, 30).replace(/[.()]/g, '\\$&')}.*\\s${e.page + 1}\\s*$`, 'm')
			);
			expect(pages[e.page].replace(/\s+/g, ' ')).toContain(e.title);
		}
		for (const q of content.manifest.requirements) {
			const own = pages.slice(sections.find((e) => e.title.startsWith(q.identifier))!.page).join(' ');
			expect(own.replace(/\s+/g, ' ')).toContain(`Verdict ${VERDICT_LOOK[q.latestRun!.verdict!].label}`);
		}
	}, 60_000);
});
