// Request parameters as Stripe's v1 API receives them: form-encoded with bracket notation
// (`line_items[0][price_data][unit_amount]=2500`, `expand[]=payment_intent`), in the body for POST
// and in the query string for GET and DELETE. Errors in the shape the API answers with.

export type ParamValue = string | Params | ParamValue[];
export interface Params {
	[key: string]: ParamValue;
}

/** An error the fake answers with, as `{ error: { type, code, message, param, … } }`. */
export class ApiError extends Error {
	constructor(
		readonly status: number,
		readonly body: {
			type: string;
			message: string;
			code?: string;
			decline_code?: string;
			param?: string;
			doc_url?: string;
		}
	) {
		super(body.message);
	}

	static invalid(message: string, param?: string, code?: string): ApiError {
		return new ApiError(400, {
			type: 'invalid_request_error',
			message,
			...(code ? { code } : {}),
			...(param ? { param } : {})
		});
	}

	static missing(kind: string, id: string, param = 'id'): ApiError {
		return new ApiError(404, {
			type: 'invalid_request_error',
			code: 'resource_missing',
			message: `No such ${kind}: '${id}'`,
			param
		});
	}
}

function keyPath(key: string): string[] | null {
	const open = key.indexOf('[');
	if (open === -1) return [key];
	const path = [key.slice(0, open)];
	const rest = key.slice(open);
	const re = /\[([^\]]*)\]/g;
	let consumed = 0;
	for (let m = re.exec(rest); m; m = re.exec(rest)) {
		if (m.index !== consumed) return null;
		path.push(m[1]);
		consumed = m.index + m[0].length;
	}
	return consumed === rest.length && path[0] !== '' ? path : null;
}

function isIndex(segment: string): boolean {
	return segment === '' || /^(0|[1-9]\d{0,3})$/.test(segment);
}

/**
 * Parses `a[b][0][c]=v&expand[]=x` into nested objects and arrays. A segment that is a number or
 * empty makes an array, except under `metadata`, whose keys are free text.
 */
export function parseParams(encoded: string): Params {
	const root: Params = {};
	for (const [key, value] of new URLSearchParams(encoded)) {
		const path = keyPath(key);
		if (!path) throw ApiError.invalid(`Invalid parameter name: ${key}`);
		let node: Params | ParamValue[] = root;
		for (let i = 0; i < path.length; i++) {
			const segment = path[i];
			const last = i === path.length - 1;
			const next = path[i + 1];
			const underMetadata = path[i] === 'metadata' || path[i - 1] === 'metadata';
			const child: () => Params | ParamValue[] = () =>
				next !== undefined && isIndex(next) && !underMetadata ? [] : {};
			if (Array.isArray(node)) {
				if (!isIndex(segment)) throw ApiError.invalid(`Invalid parameter name: ${key}`);
				const index = segment === '' ? node.length : Number(segment);
				if (last) node[index] = value;
				else {
					node[index] ??= child();
					node = node[index] as Params | ParamValue[];
				}
			} else {
				if (last) node[segment] = value;
				else {
					const existing: ParamValue | undefined = node[segment];
					if (existing === undefined || typeof existing === 'string') node[segment] = child();
					node = node[segment] as Params | ParamValue[];
				}
			}
			if (typeof node === 'string') throw ApiError.invalid(`Invalid parameter name: ${key}`);
		}
	}
	return compact(root) as Params;
}

/** Removes holes left by sparse indices (`items[2]` without `items[1]`). */
function compact(value: ParamValue): ParamValue {
	if (Array.isArray(value)) return value.filter((v) => v !== undefined).map(compact);
	if (typeof value === 'object') {
		const out: Params = {};
		for (const [k, v] of Object.entries(value)) out[k] = compact(v);
		return out;
	}
	return value;
}

/** A stable text form of parameters, to compare two requests for the same idempotency key. */
export function canonical(value: ParamValue): string {
	if (typeof value === 'string') return JSON.stringify(value);
	if (Array.isArray(value)) return `[${value.map(canonical).join(',')}]`;
	return `{${Object.keys(value)
		.sort()
		.map((k) => `${JSON.stringify(k)}:${canonical(value[k])}`)
		.join(',')}}`;
}

/**
 * What an endpoint accepts: `'scalar'` a plain value, `'map'` free keys with plain values
 * (metadata), `'list'` a list of plain values, `[shape]` a list of objects, or nested shapes.
 */
export type Shape = 'scalar' | 'map' | 'list' | Shape[] | { [key: string]: Shape };

/** Rejects parameters the endpoint does not know, as the real API does. */
export function checkShape(params: Params, shape: { [key: string]: Shape }, prefix = ''): void {
	for (const [key, value] of Object.entries(params)) {
		const name = prefix ? `${prefix}[${key}]` : key;
		const expected = shape[key];
		if (expected === undefined) {
			throw ApiError.invalid(
				`Received unknown parameter: ${name} (the local test service accepts only the parameters it models)`,
				name,
				'parameter_unknown'
			);
		}
		checkValue(value, expected, name);
	}
}

function checkValue(value: ParamValue, shape: Shape, name: string): void {
	if (shape === 'scalar') {
		if (typeof value !== 'string') throw ApiError.invalid(`Invalid value for ${name}.`, name);
	} else if (shape === 'map') {
		if (value === '') return; // `metadata=` clears it
		if (typeof value !== 'object' || Array.isArray(value)) {
			throw ApiError.invalid(`Invalid object for ${name}.`, name);
		}
		for (const [k, v] of Object.entries(value)) {
			if (typeof v !== 'string') throw ApiError.invalid(`Invalid value for ${name}[${k}].`, name);
		}
	} else if (shape === 'list') {
		if (!Array.isArray(value) || value.some((v) => typeof v !== 'string')) {
			throw ApiError.invalid(`Invalid array for ${name}.`, name);
		}
	} else if (Array.isArray(shape)) {
		if (!Array.isArray(value)) throw ApiError.invalid(`Invalid array for ${name}.`, name);
		value.forEach((item, i) => checkValue(item, shape[0], `${name}[${i}]`));
	} else {
		if (typeof value !== 'object' || Array.isArray(value)) {
			throw ApiError.invalid(`Invalid object for ${name}.`, name);
		}
		checkShape(value, shape, name);
	}
}

// Readers for checked parameters.

export function text(params: Params, key: string): string | undefined {
	const value = params[key];
	return typeof value === 'string' ? value : undefined;
}

export function required(params: Params, key: string, prefix = ''): string {
	const value = text(params, key);
	const name = prefix ? `${prefix}[${key}]` : key;
	if (value === undefined || value === '') {
		throw ApiError.invalid(`Missing required param: ${name}.`, name, 'parameter_missing');
	}
	return value;
}

export function integer(
	params: Params,
	key: string,
	prefix = '',
	{ min = 0, max = 99_999_999 }: { min?: number; max?: number } = {}
): number | undefined {
	const value = text(params, key);
	if (value === undefined) return undefined;
	const name = prefix ? `${prefix}[${key}]` : key;
	if (!/^-?\d+$/.test(value)) throw ApiError.invalid(`Invalid integer: ${value}`, name);
	const n = Number(value);
	if (n < min) throw ApiError.invalid(`Invalid integer: ${value} (must be at least ${min})`, name);
	if (n > max) throw ApiError.invalid(`Invalid integer: ${value} (must be at most ${max})`, name);
	return n;
}

export function boolean(params: Params, key: string): boolean | undefined {
	const value = text(params, key);
	if (value === undefined) return undefined;
	if (value === 'true') return true;
	if (value === 'false') return false;
	throw ApiError.invalid(`Invalid boolean: ${value}`, key);
}

export function object(params: Params, key: string): Params | undefined {
	const value = params[key];
	return typeof value === 'object' && !Array.isArray(value) ? value : undefined;
}

export function list(params: Params, key: string): ParamValue[] {
	const value = params[key];
	return Array.isArray(value) ? value : [];
}

/** Metadata as Stripe keeps it: string values, at most 50 keys; an empty value removes a key. */
export function metadata(
	params: Params,
	key = 'metadata',
	prefix = '',
	base: Record<string, string> = {}
): Record<string, string> | undefined {
	const value = params[key];
	const name = prefix ? `${prefix}[${key}]` : key;
	if (value === undefined) return undefined;
	if (value === '') return {};
	const out = { ...base };
	for (const [k, v] of Object.entries(value as Params)) {
		if (k.length > 40) {
			throw ApiError.invalid(`Metadata keys can be at most 40 characters long (${k}).`, name);
		}
		if ((v as string).length > 500) {
			throw ApiError.invalid(
				`Metadata values can be at most 500 characters long.`,
				`${name}[${k}]`
			);
		}
		if (v === '') delete out[k];
		else out[k] = v as string;
	}
	if (Object.keys(out).length > 50) {
		throw ApiError.invalid('Metadata can have at most 50 keys.', name);
	}
	return out;
}

/** `expand[]` as the SDK sends it (`expand[0]=…`) or as hand-written requests do (`expand[]=…`). */
export function expansions(params: Params): string[] {
	return list(params, 'expand').filter((v): v is string => typeof v === 'string');
}
