import ExcelJS from 'exceljs';
import { deflateRawSync } from 'node:zlib';
import { describe, expect, it } from 'vitest';
import { FileKindError, TextChecker, decideKind } from '../../../src/lib/server/evidence/file-kinds';
import { sanitiseFileName } from '../../../src/lib/server/evidence/upload';

// Signatures from the format specifications: PDF "%PDF-" (ISO 32000-1, 7.5.2), JPEG SOI FF D8 FF
// (ITU-T T.81, B.1.1.2) with a JFIF APP0 segment, PNG's 8-byte signature (ISO/IEC 15948, 5.2), ZIP local
// file header "PK\x03\x04" (PKWARE APPNOTE 4.3.7). The spreadsheet is written by exceljs.
const pdf = Buffer.from('%PDF-1.4\n1 0 obj << /Type /Catalog >> endobj\ntrailer << /Root 1 0 R >>\n%%EOF\n');
const jpeg = Buffer.from([
	0xff, 0xd8, 0xff, 0xe0, 0x00, 0x10, 0x4a, 0x46, 0x49, 0x46, 0x00, 0x01, 0x01, 0x00, 0x00, 0x01, 0x00, 0x01,
	0x00, 0x00, 0xff, 0xd9
]);
const pngSignature = Buffer.from([
	0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a, 0, 0, 0, 13, 0x49, 0x48, 0x44, 0x52, 0, 0, 0, 1, 0, 0, 0, 1,
	8, 2, 0, 0, 0
]);

function zipOf(name: string, content: string): Buffer {
	const data = deflateRawSync(Buffer.from(content));
	const h = Buffer.alloc(30);
	h.writeUInt32LE(0x04034b50, 0);
	h.writeUInt16LE(20, 4);
	h.writeUInt16LE(8, 8); // deflate
	h.writeUInt32LE(0, 14); // CRC not checked by the sniffer
	h.writeUInt32LE(data.length, 18);
	h.writeUInt32LE(content.length, 22);
	h.writeUInt16LE(Buffer.byteLength(name), 26);
	return Buffer.concat([h, Buffer.from(name), data]);
}

async function rejects(name: string, bytes: Uint8Array): Promise<string> {
	try {
		await decideKind(name, bytes);
	} catch (e) {
		expect(e).toBeInstanceOf(FileKindError);
		return (e as Error).message;
	}
	throw new Error(`${name} was accepted`);
}

describe('evidence file types', () => {
	it('accepts each kept type when name and content agree', async () => {
		const wb = new ExcelJS.Workbook();
		wb.addWorksheet('sweep').addRow([1, -3, -45]);
		const xlsx = Buffer.from(await wb.xlsx.writeBuffer());
		expect(await decideKind('report.pdf', pdf)).toBe('pdf');
		expect(await decideKind('photo.JPG', jpeg)).toBe('jpeg');
		expect(await decideKind('photo.jpeg', jpeg)).toBe('jpeg');
		expect(await decideKind('bode.png', pngSignature)).toBe('png');
		expect(await decideKind('sweep.xlsx', xlsx)).toBe('xlsx');
		expect(await decideKind('bundle.zip', zipOf('run1/readme.txt', 'rig 3 run 1'))).toBe('zip');
		expect(await decideKind('sheet-as-archive.zip', xlsx)).toBe('zip');
		expect(await decideKind('sweep.csv', Buffer.from('\uFEFFf,mag,phase\n1,0,0\n'))).toBe('csv');
		expect(await decideKind('notes.txt', Buffer.from('Rig 3 — 20 °C\n'))).toBe('txt');
		expect(await decideKind('result.json', Buffer.from('  {"verdict": "pass"}'))).toBe('json');
	});

	it('refuses other types and content that contradicts the name', async () => {
		expect(await rejects('tool.exe', Buffer.from('MZ'))).toMatch(/\.exe are not accepted/);
		expect(await rejects('noextension', Buffer.from('text'))).toMatch(/no extension/);
		expect(await rejects('report.pdf', pngSignature)).toMatch(/named \.pdf but its content is PNG/);
		expect(await rejects('data.csv', pdf)).toMatch(/named \.csv but its content is PDF/);
		expect(await rejects('sweep.xlsx', zipOf('a.txt', 'x'))).toMatch(/named \.xlsx/);
		expect(await rejects('result.json', Buffer.from('verdict: pass'))).toMatch(/does not start like JSON/);
	});

	it('checks text over the whole file: UTF-8 across chunk borders, no control bytes', () => {
		const t = new TextChecker();
		const omega = Buffer.from('Ω'); // two bytes, split across chunks
		t.push(Buffer.concat([Buffer.from('a,b\n'), omega.subarray(0, 1)]));
		t.push(Buffer.concat([omega.subarray(1), Buffer.from('\n')]));
		t.end();
		expect(() => new TextChecker().push(Buffer.from([0x61, 0x00]))).toThrow(/control bytes/);
		expect(() => new TextChecker().push(Buffer.from([0x63, 0xe9, 0x0a]))).toThrow(/not valid UTF-8/);
		const cut = new TextChecker();
		cut.push(omega.subarray(0, 1));
		expect(() => cut.end()).toThrow(/ends inside a UTF-8 character/);
	});

	it('agrees with the WHATWG UTF-8 decoder on random bytes, split at random points', () => {
		// The oracle: Node's TextDecoder in fatal mode (WHATWG Encoding, the RFC 3629 ranges) plus the
		// control-byte rule. Random bytes biased to the multi-byte lead and continuation ranges.
		let seed = 12345;
		const rnd = () => (seed = (seed * 1103515245 + 12345) >>> 0) / 2 ** 32;
		const pool = [
			0x41, 0x0a, 0x09, 0x00, 0x7f, 0x80, 0x9f, 0xa0, 0xbf, 0xc0, 0xc2, 0xdf, 0xe0, 0xed, 0xef, 0xf0, 0xf4,
			0xf5, 0xff
		];
		let accepted = 0;
		for (let n = 0; n < 5000; n++) {
			const len = 1 + Math.floor(rnd() * 8);
			const bytes = Uint8Array.from({ length: len }, () =>
				rnd() < 0.7 ? pool[Math.floor(rnd() * pool.length)] : Math.floor(rnd() * 256)
			);
			let oracle = true;
			try {
				new TextDecoder('utf-8', { fatal: true }).decode(bytes);
			} catch {
				oracle = false;
			}
			if (bytes.some((b) => (b < 0x20 && b !== 0x09 && b !== 0x0a && b !== 0x0c && b !== 0x0d) || b === 0x7f))
				oracle = false;
			const cut = Math.floor(rnd() * (len + 1));
			const t = new TextChecker();
			let ours = true;
			try {
				t.push(bytes.subarray(0, cut));
				t.push(bytes.subarray(cut));
				t.end();
			} catch {
				ours = false;
			}
			expect(ours, `bytes ${Buffer.from(bytes).toString('hex')}`).toBe(oracle);
			if (oracle) accepted++;
		}
		expect(accepted).toBeGreaterThan(200);
	});

	it('sanitises names for storage keys', () => {
		expect(sanitiseFileName('../../etc/passwd')).toBe('passwd');
		expect(sanitiseFileName('C:\\rig\\Résumé (final).pdf')).toBe('Resume_final_.pdf');
		expect(sanitiseFileName('.hidden')).toBe('hidden');
		expect(sanitiseFileName('Ω')).toBe('file');
		expect(sanitiseFileName('x'.repeat(300) + '.csv').length).toBe(100);
	});
});
