import { createHash } from 'node:crypto';
import { PassThrough, Readable, Transform, type Writable } from 'node:stream';
import { pipeline } from 'node:stream/promises';
import yazl from 'yazl';
import { CAUTION_TEXT, CAUTION_TITLE } from '../../caution';
import { canonical } from '../audit';
import { csvStream, sourceOf, writeWorkbook } from '../trace/export';
import type { PackageContent } from './content';
import { SIGNOFF_SOURCES, type SignedRecord } from './signoff';

// The data package's archive (ZIP, yazl, streamed): the report, the matrix as XLSX and CSV, the manifest,
// every model version's and every run's JSON, every accepted evidence file as stored, README.txt and
// SHA256SUMS over all of them (sha256sum -c SHA256SUMS checks them after unzipping). Entries are written
// one after the other, each hashed as it streams through, so memory holds one entry's buffers at a time,
// never the archive. ARCHIVE_PARTS lists the parts; a part whose data exists later (a ReqIF export) is
// one more builder there. The sign-off records are signoff/*.json, and each signature's signed content
// as canonical JSON in signoff/signed/ (its SHA-256 is the signature's signed hash).

export interface ArchiveEntry {
	path: string;
	/** What the file is, for README.txt. */
	about: string;
	open: () => Readable | Promise<Readable>;
	/** The SHA-256 the file must have (a recorded hash): the build fails when the bytes differ. */
	mustHash?: string;
}

export interface ArchiveInputs {
	content: PackageContent;
	pdf: Buffer;
	reportName: string;
	/** The stored bytes of an accepted evidence file. */
	evidence: (storageKey: string) => Promise<Readable>;
}

export interface ArchivedFile {
	path: string;
	sha256: string;
	bytes: number;
}

/** A file name safe in every unzip tool: letters, digits, dot, dash, underscore. */
export const safeName = (s: string) =>
	s
		.normalize('NFKD')
		.replace(/[^\w.-]+/g, '-')
		.replace(/^-+|-+$/g, '')
		.slice(0, 80) || 'file';

const json = (value: unknown) => Buffer.from(canonical(value), 'utf8');
const bufferStream = (b: Buffer) => Readable.from([b]);

type Part = (i: ArchiveInputs) => ArchiveEntry[];

const reportPart: Part = ({ pdf, reportName }) => [
	{
		path: reportName,
		about: 'The report (PDF): cover, contents, summary, trace matrix, one section per requirement, appendix.',
		open: () => bufferStream(pdf)
	}
];

const matrixPart: Part = ({ content: c }) => [
	{
		path: 'trace-matrix.xlsx',
		about:
			'The trace matrix workbook: cover with the caution, matrix, requirements, analyses, evidence, open items.',
		open: () => {
			const pass = new PassThrough();
			writeWorkbook(
				sourceOf(c.manifest),
				{
					exportedAt: c.generatedAt,
					exportedBy: c.generatedBy,
					baseline: c.baseline
						? {
								number: c.baseline.number,
								label: c.baseline.label,
								manifestHash: c.manifestHash,
								frozenAt: c.baseline.frozenAt,
								frozenBy: c.baseline.frozenBy
							}
						: null
				},
				pass
			).catch((e) => pass.destroy(e as Error));
			return pass;
		}
	},
	{
		path: 'trace-matrix.csv',
		about:
			'The matrix sheet as CSV (UTF-8 with a byte-order mark; cells starting with = + - @ are prefixed with an apostrophe so that no spreadsheet runs them as formulas).',
		open: () => Readable.fromWeb(csvStream(c.manifest.requirements) as never)
	}
];

const manifestPart: Part = ({ content: c }) => [
	{
		path: 'manifest.json',
		about: `The ${c.baseline ? 'baseline' : 'present-state'} manifest as canonical JSON (keys sorted, no whitespace).`,
		open: () => bufferStream(json(c.manifest))
	}
];

const modelPart: Part = ({ content: c }) =>
	c.modelVersions.map((v) => ({
		path: `models/${safeName(v.model)}-v${v.version}.json`,
		about: `Model version ${v.model} v${v.version} (canonical JSON of its content).`,
		open: () => bufferStream(json(v.content))
	}));

const runPart: Part = ({ content: c }) =>
	c.manifest.requirements.flatMap((r) => {
		const lr = r.latestRun;
		const run = lr ? c.runs.get(lr.id) : undefined;
		if (!lr || !run) return [];
		const base = `runs/${safeName(r.identifier)}-run-${lr.id}`;
		return [
			{
				path: `${base}.json`,
				about: `Result of analysis run ${lr.id} for ${r.identifier} (canonical JSON of verdict, result and worst point).`,
				open: () =>
					bufferStream(json({ verdict: run.verdict, result: run.result, worstPoint: run.worst_point }))
			},
			{
				path: `${base}-curves.json`,
				about: `The curves of run ${lr.id} the report's plots are drawn from (illustration; the algebra decides).`,
				open: () => bufferStream(json(run.curves ?? null))
			}
		];
	});

const evidencePart: Part = ({ content: c, evidence }) =>
	c.manifest.evidence
		.filter((e) => e.review?.decision === 'accepted')
		.map((e) => {
			const f = c.evidenceFiles.get(e.fileId);
			return {
				path: `evidence/${e.evidenceId}-r${e.revision}-${safeName(e.file)}`,
				about: `Evidence #${e.evidenceId} revision ${e.revision}, "${e.title}", accepted by ${e.review?.reviewer ?? ''}; the file exactly as stored.`,
				mustHash: e.sha256,
				open: () => {
					if (!f)
						throw new Error(
							`evidence file ${e.fileId} (#${e.evidenceId} r${e.revision}) is not in the store's records`
						);
					return evidence(f.storage_key);
				}
			};
		});

/** A signature as the archive writes it (its signed content is in signoff/signed/<id>.json). */
const signatureJson = ({ content: _content, ...s }: SignedRecord) => ({
	...s,
	signedContent: `signoff/signed/${s.id}.json`
});

const signoffPart: Part = ({ content: c }) => {
	const so = c.signoff;
	const frozen = c.baseline ? SIGNOFF_SOURCES.frozen : SIGNOFF_SOURCES.draft;
	const readAt = { source: SIGNOFF_SOURCES.readAtPackageTime, readAt: so.readAt.toISOString() };
	return [
		{
			path: 'signoff/release.json',
			about: c.baseline
				? `The release signature of baseline #${c.baseline.number} (${SIGNOFF_SOURCES.readAtPackageTime}), and whether it signs this manifest's SHA-256.`
				: 'A draft has no release: this file says so.',
			open: () =>
				bufferStream(
					json({
						draft: c.draft,
						baseline: c.baseline ? { number: c.baseline.number, label: c.baseline.label } : null,
						manifestSha256: c.manifestHash,
						...readAt,
						signatures: so.release.map((s) => ({
							...signatureJson(s),
							signsThisManifest: s.signsThisManifest
						}))
					})
				)
		},
		{
			path: 'signoff/approvals.json',
			about: `Per requirement: its review state and revision in force (${frozen}), the signatures of its approvals and returns, of its evidence reviews and of the decisions on its findings (${SIGNOFF_SOURCES.readAtPackageTime}).`,
			open: () =>
				bufferStream(
					json({
						reviewSource: frozen,
						signatureSource: readAt,
						requirements: c.manifest.requirements.map((r) => {
							const x = so.byRequirement.get(r.identifier);
							return {
								requirement: r.identifier,
								review: x?.review ?? null,
								approvals: (x?.approvals ?? []).map((s) => s.id),
								evidenceReviews: (x?.evidence ?? []).map((s) => s.id),
								findings: (x?.findings ?? []).map((f) => f.label),
								findingDecisions: (x?.findingDecisions ?? []).map((s) => s.id)
							};
						})
					})
				)
		},
		{
			path: 'signoff/findings.json',
			about: `The findings against this package's requirements with their states (${SIGNOFF_SOURCES.readAtPackageTime}), and the deferred findings the manifest carries (${frozen}).`,
			open: () =>
				bufferStream(
					json({
						...readAt,
						counts: so.counts,
						findings: so.findings,
						deferred: { source: frozen, findings: so.deferred.map(({ signed: _s, ...d }) => d) }
					})
				)
		},
		{
			path: 'signoff/signatures.json',
			about: `Every electronic signature this package shows: act, meaning, signer, time, how confirmed, what was signed and the SHA-256 of the signed content (${SIGNOFF_SOURCES.readAtPackageTime}).`,
			open: () => bufferStream(json({ ...readAt, signatures: so.signatures.map(signatureJson) }))
		},
		...so.signatures.map((s) => ({
			path: `signoff/signed/${s.id}.json`,
			about: `What signature #${s.id} signed (${s.subject}), as canonical JSON; its SHA-256 is the signed hash.`,
			open: () => bufferStream(json(s.content))
		}))
	];
};

/** The archive's parts, in order. */
export const ARCHIVE_PARTS: Part[] = [
	reportPart,
	matrixPart,
	manifestPart,
	modelPart,
	runPart,
	evidencePart,
	signoffPart
];

function readme(c: PackageContent, entries: ArchiveEntry[], checks: string[]): Buffer {
	const what = c.baseline
		? `baseline #${c.baseline.number} "${c.baseline.label}" of project ${c.project.key} (${c.project.name}), frozen ${c.baseline.frozenAt} by ${c.baseline.frozenBy}`
		: `a DRAFT of the present state of project ${c.project.key} (${c.project.name}); it is not a frozen baseline`;
	const lines = [
		'Loopwarden data package',
		'=======================',
		'',
		`This archive is the data package of ${what}.`,
		`Generated ${c.generatedAt.toISOString()} by ${c.generatedBy}; engine version ${c.engineVersion}; application version ${c.appVersion}.`,
		`Manifest SHA-256: ${c.manifestHash}`,
		'',
		`CAUTION: ${CAUTION_TITLE}.`,
		CAUTION_TEXT,
		'Loopwarden says "proved" for what its exact algebra decides about the model as entered; it is not a qualified tool (RTCA DO-330).',
		'',
		'How to check this archive',
		'-------------------------',
		'1. Unzip it into an empty folder and run, in that folder:   sha256sum -c SHA256SUMS',
		'   Every line must say OK. SHA256SUMS lists the SHA-256 (NIST FIPS 180-4) of every other file here.',
		"2. sha256sum manifest.json prints the manifest SHA-256 above and on the report's cover.",
		'3. Likewise each models/*.json hashes to the model version SHA-256 in the',
		'   manifest, each runs/*-run-N.json to the output SHA-256 of run N, and each evidence file to the',
		'   SHA-256 recorded when it was uploaded and reviewed (listed in the report and the workbook),',
		'   and each signoff/signed/N.json to the signed SHA-256 of signature N (signoff/signatures.json).',
		...checks.map((l) => '   ' + l),
		'',
		'Files',
		'-----',
		...entries.map((e) => `${e.path}\n    ${e.about}`),
		'README.txt\n    This file.',
		'SHA256SUMS\n    SHA-256 of every file above, in the format of GNU coreutils sha256sum.',
		''
	];
	return Buffer.from(lines.join('\n'), 'utf8');
}

/** Which recorded hashes the files reproduce (stated in README.txt; a mismatch is named, not hidden). */
function recordedHashChecks(c: PackageContent): string[] {
	const sha = (b: Buffer) => createHash('sha256').update(b).digest('hex');
	const out: string[] = [];
	out.push(
		sha(json(c.manifest)) === c.manifestHash
			? 'Checked when this archive was made: manifest.json reproduces the manifest SHA-256.'
			: 'WARNING: manifest.json does NOT reproduce the manifest SHA-256 recorded for the baseline.'
	);
	const badModels = c.modelVersions.filter((v) => sha(json(v.content)) !== v.content_hash);
	out.push(
		badModels.length
			? `WARNING: these model files do not reproduce their recorded SHA-256: ${badModels.map((v) => `${v.model} v${v.version}`).join(', ')}.`
			: `Checked when this archive was made: all ${c.modelVersions.length} model files reproduce their SHA-256.`
	);
	const runs = c.manifest.requirements.flatMap((r) => (r.latestRun ? [r.latestRun] : []));
	const badRuns = runs.filter((lr) => {
		const run = c.runs.get(lr.id);
		return (
			!run ||
			!lr.outputHash ||
			sha(json({ verdict: run.verdict, result: run.result, worstPoint: run.worst_point })) !== lr.outputHash
		);
	});
	out.push(
		badRuns.length
			? `Runs whose file does not reproduce the recorded output SHA-256 (stored before outputs were hashed this way, or changed): ${badRuns.map((r) => r.id).join(', ')}.`
			: `Checked when this archive was made: all ${runs.length} run files reproduce their output SHA-256.`
	);
	const badSignatures = c.signoff.signatures.filter((s) => sha(json(s.content)) !== s.sha256);
	out.push(
		badSignatures.length
			? `WARNING: the signed content of these signatures does not reproduce their signed SHA-256: ${badSignatures.map((s) => `#${s.id}`).join(', ')}.`
			: `Checked when this archive was made: all ${c.signoff.signatures.length} signed contents in signoff/signed/ reproduce their signed SHA-256.`
	);
	return out;
}

/** Hash and count a stream as it passes. */
function hashing(): { t: Transform; done: Promise<{ sha256: string; bytes: number }> } {
	const h = createHash('sha256');
	let bytes = 0;
	let resolve!: (v: { sha256: string; bytes: number }) => void;
	const done = new Promise<{ sha256: string; bytes: number }>((r) => (resolve = r));
	const t = new Transform({
		transform(chunk: Buffer, _enc, cb) {
			h.update(chunk);
			bytes += chunk.length;
			cb(null, chunk);
		},
		flush(cb) {
			resolve({ sha256: h.digest('hex'), bytes });
			cb();
		}
	});
	return { t, done };
}

/**
 * Write the archive into `out`. Resolves, once the last byte is written, with every file's SHA-256 (the
 * lines of SHA256SUMS) and the archive's own.
 */
export async function writeArchive(
	inputs: ArchiveInputs,
	out: Writable,
	progress: (fraction: number, step: string) => Promise<void> = async () => {}
): Promise<{ files: ArchivedFile[]; sha256: string; bytes: number }> {
	const c = inputs.content;
	const entries = ARCHIVE_PARTS.flatMap((p) => p(inputs));
	const zip = new yazl.ZipFile();
	const mtime = c.generatedAt;
	const files: ArchivedFile[] = [];
	const failures: Error[] = [];
	let n = 0;
	for (const e of entries) {
		zip.addReadStreamLazy(e.path, { mtime, compress: !/\.(pdf|xlsx|zip|png|jpe?g)$/i.test(e.path) }, (cb) => {
			Promise.resolve()
				.then(e.open)
				.then((src) => {
					const { t, done } = hashing();
					src.on('error', (err) => t.destroy(err));
					done.then((d) => {
						files.push({ path: e.path, ...d });
						if (e.mustHash && d.sha256 !== e.mustHash) {
							failures.push(
								new Error(`${e.path}: the stored bytes hash to ${d.sha256}, not the recorded ${e.mustHash}`)
							);
						}
						n++;
						if (n % 25 === 0) void progress(n / entries.length, `archive: file ${n} of ${entries.length}`);
					});
					cb(null, src.pipe(t));
				})
				.catch((err) => cb(err as Error, undefined as never));
		});
	}
	const readmeBytes = readme(c, entries, recordedHashChecks(c));
	zip.addBuffer(readmeBytes, 'README.txt', { mtime });
	// Called when yazl reaches it, after every entry above has been read through (yazl reads one at a time).
	zip.addReadStreamLazy('SHA256SUMS', { mtime }, (cb) => {
		const readmeHash = createHash('sha256').update(readmeBytes).digest('hex');
		const all = [...files, { path: 'README.txt', sha256: readmeHash, bytes: readmeBytes.length }];
		const text = all.map((f) => `${f.sha256}  ${f.path}\n`).join('');
		files.push({ path: 'README.txt', sha256: readmeHash, bytes: readmeBytes.length });
		cb(null, bufferStream(Buffer.from(text, 'utf8')));
	});
	zip.end();
	zip.on('error', (err: Error) => (zip.outputStream as unknown as PassThrough).destroy(err));
	const whole = hashing();
	await pipeline(zip.outputStream as unknown as Readable, whole.t, out);
	if (failures.length) throw failures[0];
	const d = await whole.done;
	return { files, ...d };
}
