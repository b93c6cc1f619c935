/**
 * What the app keeps of an uploaded file's name, which is only ever a label shown to staff: the
 * last part of a path ("../../etc/passwd" → "passwd", "..\win.ini" → "win.ini"), without control
 * characters (NUL cannot be stored) nor the bidirectional-override characters that make
 * "photo\u202Egpj.exe" read as "photoexe.jpg", trimmed and cut to 200 characters. Empty when
 * nothing is left.
 */
export function cleanFileName(name: string): string {
	return (
		name
			.split(/[\\/]/)
			.pop()!
			// eslint-disable-next-line no-control-regex
			.replace(/[\u0000-\u001f\u007f\u200e\u200f\u202a-\u202e\u2066-\u2069]/g, '')
			.trim()
			.slice(0, 200)
	);
}
