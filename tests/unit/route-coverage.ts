import { readdirSync, readFileSync } from 'node:fs';
import { join, relative, sep } from 'node:path';
import ts from 'typescript';

/**
 * Finds staff, account and API route handlers that do not call requireRoles(...) as their first
 * statement. Public API routes must be listed in PUBLIC_API with the reason they are public.
 */
export const PROTECTED_PREFIXES = ['staff', 'account', 'api'];

export const PUBLIC_API: Record<string, string> = {
	'api/patients': 'public data for visitors',
	'api/patients/[slug]': 'public data for visitors',
	'api/patients/[slug]/journey': 'the public projection only: delayed, coarse cells, dates only',
	'api/patients/[slug]/occurrences.csv': 'Darwin Core export of the public projection only',
	'api/stories': 'public data for visitors',
	'api/webhooks/stripe': 'the payment processor; every request must carry a valid signature',
	'api/adoptions/session/[id]':
		'the thank-you page; the checkout session id is an unguessable capability held by the payer',
	'api/unsubscribe/[token]':
		'RFC 8058 one-click unsubscribe: no cookie is sent; the signed token names address and list'
};

const HANDLERS = ['GET', 'POST', 'PUT', 'PATCH', 'DELETE', 'OPTIONS', 'HEAD', 'fallback'];

export interface Violation {
	file: string;
	handler: string;
	problem: string;
}

/** The route's URL path with (groups) removed, e.g. 'staff/users'. */
export function routePath(routesDir: string, file: string): string {
	return relative(routesDir, file)
		.split(sep)
		.slice(0, -1)
		.filter((segment) => !/^\(.*\)$/.test(segment))
		.join('/');
}

export function isProtected(path: string): boolean {
	const first = path.split('/')[0];
	return PROTECTED_PREFIXES.includes(first) && !(path in PUBLIC_API);
}

function firstStatementCallsRequireRoles(fn: ts.FunctionLikeDeclaration): boolean {
	const body = fn.body;
	if (!body) return false;
	const first = ts.isBlock(body) ? body.statements[0] : body;
	if (!first) return false;
	let found = false;
	const visit = (node: ts.Node) => {
		if (
			ts.isCallExpression(node) &&
			ts.isIdentifier(node.expression) &&
			node.expression.text === 'requireRoles'
		) {
			found = true;
		}
		if (!found && !ts.isFunctionLike(node)) ts.forEachChild(node, visit);
	};
	visit(first);
	return found;
}

function asFunction(node: ts.Node | undefined): ts.FunctionLikeDeclaration | undefined {
	if (!node) return undefined;
	if (
		ts.isArrowFunction(node) ||
		ts.isFunctionExpression(node) ||
		ts.isFunctionDeclaration(node) ||
		ts.isMethodDeclaration(node)
	) {
		return node;
	}
	if (
		ts.isSatisfiesExpression(node) ||
		ts.isAsExpression(node) ||
		ts.isParenthesizedExpression(node)
	) {
		return asFunction(node.expression);
	}
	return undefined;
}

/** Checks one +page.server.ts, +layout.server.ts or +server.ts source. */
export function checkRouteSource(file: string, source: string): Violation[] {
	const sf = ts.createSourceFile(file, source, ts.ScriptTarget.Latest, true, ts.ScriptKind.TS);
	const violations: Violation[] = [];
	const exported = new Map<string, ts.Node>();
	for (const statement of sf.statements) {
		const isExport = ts
			.getModifiers(statement as ts.HasModifiers)
			?.some((m) => m.kind === ts.SyntaxKind.ExportKeyword);
		if (!isExport) continue;
		if (ts.isFunctionDeclaration(statement) && statement.name) {
			exported.set(statement.name.text, statement);
		} else if (ts.isVariableStatement(statement)) {
			for (const decl of statement.declarationList.declarations) {
				if (ts.isIdentifier(decl.name) && decl.initializer) {
					exported.set(decl.name.text, decl.initializer);
				}
			}
		}
	}
	for (const statement of sf.statements) {
		if (ts.isExportDeclaration(statement)) {
			violations.push({
				file,
				handler: 'export { … }',
				problem: 're-exported handlers cannot be checked: define them in this file'
			});
		}
	}

	const check = (name: string, node: ts.Node | undefined) => {
		const fn = asFunction(node);
		if (!fn) {
			violations.push({ file, handler: name, problem: 'is not a function written in this file' });
		} else if (!firstStatementCallsRequireRoles(fn)) {
			violations.push({ file, handler: name, problem: 'does not call requireRoles(...) first' });
		}
	};

	const isEndpoint = file.endsWith('+server.ts');
	if (isEndpoint) {
		const handlers = HANDLERS.filter((h) => exported.has(h));
		if (handlers.length === 0)
			violations.push({ file, handler: '-', problem: 'exports no handler' });
		for (const h of handlers) check(h, exported.get(h));
		return violations;
	}

	if (!exported.has('load')) {
		violations.push({ file, handler: 'load', problem: 'is missing: the page renders unchecked' });
	} else {
		check('load', exported.get('load'));
	}
	let actions = exported.get('actions');
	while (actions && (ts.isSatisfiesExpression(actions) || ts.isAsExpression(actions))) {
		actions = actions.expression;
	}
	if (actions) {
		if (!ts.isObjectLiteralExpression(actions)) {
			violations.push({ file, handler: 'actions', problem: 'must be an object literal' });
		} else {
			for (const prop of actions.properties) {
				const name = prop.name && ts.isIdentifier(prop.name) ? prop.name.text : '?';
				if (ts.isMethodDeclaration(prop)) check(`actions.${name}`, prop);
				else if (ts.isPropertyAssignment(prop)) check(`actions.${name}`, prop.initializer);
				else violations.push({ file, handler: `actions.${name}`, problem: 'cannot be checked' });
			}
		}
	}
	return violations;
}

function walk(dir: string): string[] {
	return readdirSync(dir, { withFileTypes: true }).flatMap((entry) =>
		entry.isDirectory() ? walk(join(dir, entry.name)) : [join(dir, entry.name)]
	);
}

/** Every violation under a routes folder, plus pages in protected areas with no server load. */
export function checkRoutes(routesDir: string): { checked: string[]; violations: Violation[] } {
	const files = walk(routesDir);
	const checked: string[] = [];
	const violations: Violation[] = [];
	for (const file of files) {
		const path = routePath(routesDir, file);
		if (!isProtected(path)) continue;
		const base = file.split(sep).at(-1) ?? '';
		const dir = file.slice(0, -base.length);
		if (['+page.server.ts', '+layout.server.ts', '+server.ts'].includes(base)) {
			checked.push(relative(routesDir, file));
			violations.push(...checkRouteSource(relative(routesDir, file), readFileSync(file, 'utf8')));
		} else if (/^\+(page|layout)\.(svelte|ts|js)$/.test(base)) {
			const server = base.startsWith('+page') ? '+page.server.ts' : '+layout.server.ts';
			if (!files.includes(dir + server)) {
				violations.push({
					file: relative(routesDir, file),
					handler: '-',
					problem: `has no ${server} whose load calls requireRoles(...)`
				});
			}
		} else if (/^\+.*\.server\.js$/.test(base)) {
			violations.push({
				file: relative(routesDir, file),
				handler: '-',
				problem: 'write it in TypeScript'
			});
		}
	}
	return { checked, violations };
}
