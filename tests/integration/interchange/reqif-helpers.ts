import { spawnSync } from 'node:child_process';
import { resolve } from 'node:path';

// xmllint against the vendored ReqIF 1.2 schema (tests/reqif/SOURCES.md says where it comes from).
const dir = resolve('tests/reqif');

export function xmllint(file: string): { ok: boolean; output: string } {
	const r = spawnSync('xmllint', ['--nonet', '--noout', '--schema', `${dir}/reqif.xsd`, file], {
		encoding: 'utf8',
		env: { ...process.env, XML_CATALOG_FILES: `${dir}/catalog.xml` }
	});
	return { ok: r.status === 0, output: `${r.stdout}${r.stderr}` };
}

/** The file without the header's CREATION-TIME (the one value not derived from the content). */
export const withoutCreationTime = (s: string) =>
	s.replace(/<CREATION-TIME>[^<]*<\/CREATION-TIME>/, '<CREATION-TIME/>');
