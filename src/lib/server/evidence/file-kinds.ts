import { fileTypeFromBuffer } from 'file-type';

// Which files Loopwarden keeps as evidence, decided from the content as well as the name: the extension
// must name an accepted type and the first bytes must agree with it (binary signatures through
// file-type; text types by a UTF-8 and printable-character check, continued over the whole file).

export const ACCEPTED = {
	csv: 'text/csv; charset=utf-8',
	txt: 'text/plain; charset=utf-8',
	json: 'application/json; charset=utf-8',
	pdf: 'application/pdf',
	png: 'image/png',
	jpeg: 'image/jpeg',
	xlsx: 'application/vnd.openxmlformats-officedocument.spreadsheetml.sheet',
	zip: 'application/zip'
} as const;
export type FileKind = keyof typeof ACCEPTED;
export const TEXT_KINDS: readonly FileKind[] = ['csv', 'txt', 'json'];
export const ACCEPTED_LIST = 'CSV, TXT, JSON, PDF, PNG, JPEG, XLSX or ZIP';

/** How many leading bytes the decision looks at. */
export const SNIFF_BYTES = 64 * 1024;

const BY_EXTENSION: Record<string, FileKind> = {
	csv: 'csv',
	txt: 'txt',
	text: 'txt',
	log: 'txt',
	dat: 'txt',
	json: 'json',
	pdf: 'pdf',
	png: 'png',
	jpg: 'jpeg',
	jpeg: 'jpeg',
	xlsx: 'xlsx',
	zip: 'zip'
};

export function extensionOf(name: string): string {
	const m = /\.([A-Za-z0-9]{1,8})$/.exec(name.trim());
	return m ? m[1].toLowerCase() : '';
}

export class FileKindError extends Error {
	constructor(message: string) {
		super(message);
		this.name = 'FileKindError';
	}
}

/**
 * Checks a text file chunk by chunk: valid UTF-8 (the byte ranges of RFC 3629, section 4, so no overlong
 * forms and no surrogates) and printable. Works on the bytes, without decoding them into strings, so a
 * large text file makes no garbage. Throws FileKindError at the first bad byte.
 */
export class TextChecker {
	private need = 0;
	private lo = 0x80;
	private hi = 0xbf;
	private offset = 0;
	push(chunk: Uint8Array): void {
		let { need, lo, hi } = this;
		for (let i = 0; i < chunk.length; i++) {
			const b = chunk[i];
			if (need === 0) {
				if (b < 0x80) {
					if ((b < 0x20 && b !== 0x09 && b !== 0x0a && b !== 0x0c && b !== 0x0d) || b === 0x7f) {
						throw new FileKindError(
							`The file is named as text but holds binary control bytes (near byte ${this.offset + i}).`
						);
					}
					continue;
				}
				lo = 0x80;
				hi = 0xbf;
				if (b >= 0xc2 && b <= 0xdf) need = 1;
				else if (b === 0xe0) [need, lo] = [2, 0xa0];
				else if ((b >= 0xe1 && b <= 0xec) || b === 0xee || b === 0xef) need = 2;
				else if (b === 0xed) [need, hi] = [2, 0x9f];
				else if (b === 0xf0) [need, lo] = [3, 0x90];
				else if (b >= 0xf1 && b <= 0xf3) need = 3;
				else if (b === 0xf4) [need, hi] = [3, 0x8f];
				else
					throw new FileKindError(
						`The file is named as text but is not valid UTF-8 (near byte ${this.offset + i}).`
					);
			} else {
				if (b < lo || b > hi) {
					throw new FileKindError(
						`The file is named as text but is not valid UTF-8 (near byte ${this.offset + i}).`
					);
				}
				need--;
				lo = 0x80;
				hi = 0xbf;
			}
		}
		this.need = need;
		this.lo = lo;
		this.hi = hi;
		this.offset += chunk.length;
	}
	end(): void {
		if (this.need !== 0)
			throw new FileKindError('The file is named as text but ends inside a UTF-8 character.');
	}
}

/**
 * Decide the type of a file from its name and its first bytes (`head`, up to SNIFF_BYTES). Throws FileKindError (answered with 415) when they disagree or the
 * type is not one we keep.
 */
export async function decideKind(name: string, head: Uint8Array): Promise<FileKind> {
	const ext = extensionOf(name);
	const claimed = BY_EXTENSION[ext];
	if (!claimed) {
		throw new FileKindError(
			`Files of type ${ext ? `.${ext}` : '(no extension)'} are not accepted as evidence; send ${ACCEPTED_LIST}.`
		);
	}
	const sniffed = await fileTypeFromBuffer(head);
	if (TEXT_KINDS.includes(claimed)) {
		if (sniffed) {
			throw new FileKindError(
				`The file is named .${ext} but its content is ${sniffed.ext.toUpperCase()} (${sniffed.mime}).`
			);
		}
		if (claimed === 'json') {
			const first = new TextDecoder()
				.decode(head.subarray(0, 64))
				.replace(/^\uFEFF/, '')
				.trimStart()[0];
			if (first !== undefined && first !== '{' && first !== '[') {
				throw new FileKindError(
					'The file is named .json but does not start like JSON (an object or an array).'
				);
			}
		}
		return claimed;
	}
	const got = sniffed?.ext === 'jpg' ? 'jpeg' : sniffed?.ext;
	if (got === claimed) return claimed;
	// An Office Open XML file is a ZIP container: one named .zip is kept as a ZIP.
	if (claimed === 'zip' && (got === 'xlsx' || got === 'docx' || got === 'pptx')) return 'zip';
	// file-type only recognises an Office file when its part list is near the start; a spreadsheet whose
	// first entries are elsewhere is still a ZIP container underneath.
	if (
		claimed === 'xlsx' &&
		got === 'zip' &&
		/\[Content_Types\]\.xml|xl\//.test(Buffer.from(head).toString('latin1'))
	) {
		return 'xlsx';
	}
	throw new FileKindError(
		`The file is named .${ext} but its content ${got ? `is ${got.toUpperCase()}` : 'is not recognised as ' + claimed.toUpperCase()}.`
	);
}
