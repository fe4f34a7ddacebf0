// Child of the package bench section: builds a data package of n generated requirements (engine-computed
// runs with curves, accepted evidence files) in this process, as scripts/package-build.ts does for the
// worker, and prints one JSON line with the times and this process's peak memory.
import { createWriteStream, mkdtempSync, rmSync, statSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { Readable } from 'node:stream';
import { writeArchive } from '../../src/lib/server/packages/archive';
import { renderReport } from '../../src/lib/server/packages/report';
import { packageContentFixture } from '../../tests/factories/package-content';

const n = Number(process.argv[2] ?? 500);
const t0 = performance.now();
const { content, evidence } = packageContentFixture(n, { evidenceBytes: 64 * 1024 });
const t1 = performance.now();
const cpu0 = process.cpuUsage();
const report = await renderReport(content);
const t2 = performance.now();
const dir = mkdtempSync(join(tmpdir(), 'lw-bench-package-'));
const byKey = new Map([...content.evidenceFiles].map(([id, f]) => [f.storage_key, evidence.get(id)!]));
const file = join(dir, 'package.zip');
const archive = await writeArchive(
	{
		content,
		pdf: report.pdf,
		reportName: 'report.pdf',
		evidence: async (key) => Readable.from([byKey.get(key)!])
	},
	createWriteStream(file)
);
const t3 = performance.now();
const cpu = process.cpuUsage(cpu0);
const zipBytes = statSync(file).size;
rmSync(dir, { recursive: true, force: true });
console.log(
	JSON.stringify({
		requirements: n,
		fixtureMs: Math.round(t1 - t0),
		reportMs: Math.round(t2 - t1),
		archiveMs: Math.round(t3 - t2),
		// CPU time of report and archive (user + system): the figure on a machine shared with other work.
		cpuMs: Math.round((cpu.user + cpu.system) / 1000),
		pages: report.pages,
		pdfBytes: report.pdf.length,
		zipBytes,
		files: archive.files.length,
		peakRssMB: Math.round(process.resourceUsage().maxRSS / 1024)
	})
);
