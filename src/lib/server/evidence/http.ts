// Content-Disposition with the name as given (RFC 6266 / RFC 5987 filename*) and a plain ASCII fallback.
export function contentDisposition(type: 'attachment' | 'inline', name: string): string {
	const ascii = name.replace(/[^\x20-\x7e]/g, '_').replace(/["\\;]/g, '_') || 'evidence';
	return `${type}; filename="${ascii}"; filename*=UTF-8''${encodeURIComponent(name)}`;
}
