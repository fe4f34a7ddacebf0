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
 * Bytes that make a file not text: C0 controls other than tab, line feed, form feed and carriage return,
 * and DEL. (Invalid UTF-8 is caught by the decoder.)
 */
export function hasControlBytes(chunk: Uint8Array): boolean {
	for (let i = 0; i < chunk.length; i++) {
		const b = chunk[i];
		if ((b < 0x20 && b !== 0x09 && b !== 0x0a && b !== 0x0c && b !== 0x0d) || b === 0x7f) return true;
	}
	return false;
}

/** Checks a text file chunk by chunk: valid UTF-8 and printable. Throws FileKindError on the first bad chunk. */
export class TextChecker {
	private decoder = new TextDecoder('utf-8', { fatal: true, ignoreBOM: false });
	private offset = 0;
	push(chunk: Uint8Array): void {
		if (hasControlBytes(chunk)) {
			throw new FileKindError(
				`The file is named as text but holds binary control bytes (near byte ${this.offset}).`
			);
		}
		try {
			this.decoder.decode(chunk, { stream: true });
		} catch {
			throw new FileKindError(`The file is named as text but is not valid UTF-8 (near byte ${this.offset}).`);
		}
		this.offset += chunk.length;
	}
	end(): void {
		try {
			this.decoder.decode();
		} catch {
			throw new FileKindError('The file is named as text but ends inside a UTF-8 character.');
		}
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
