// Reading a JSON-lines answer (application/x-ndjson) in the browser as it arrives: a first line that
// describes the set (a "head"), then one item per line. `onProgress` sees the items read so far after
// each chunk, so a page can draw its first screenful before the last line arrives.

export interface JsonLines<H, T> {
	head: H | null;
	items: T[];
}

export async function readJsonLines<H, T>(
	res: Response,
	onProgress?: (items: readonly T[]) => void
): Promise<JsonLines<H, T>> {
	if (!res.ok || !res.body) throw new Error(`the server answered ${res.status}`);
	const reader = res.body.pipeThrough(new TextDecoderStream()).getReader();
	const items: T[] = [];
	let head: H | null = null;
	let buffer = '';
	let lineNo = 0;
	for (;;) {
		const { value, done } = await reader.read();
		if (value) buffer += value;
		const lines = buffer.split('\n');
		// The last piece may be a line cut in the middle; it waits for the next chunk.
		buffer = done ? '' : (lines.pop() ?? '');
		for (const line of lines) {
			lineNo++;
			if (!line.trim()) continue;
			let obj: unknown;
			try {
				obj = JSON.parse(line);
			} catch {
				throw new Error(`line ${lineNo} of the answer is not JSON`);
			}
			if (head === null) head = obj as H;
			else items.push(obj as T);
		}
		onProgress?.(items);
		if (done) break;
	}
	return { head, items };
}
