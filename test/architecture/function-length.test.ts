/**
 * No function in src is longer than MAX_BODY_LINES lines of body, so that a reader can hold any one
 * of them in mind (a contributor rule of this project, DEVELOPERS.md). Counted with the TypeScript
 * compiler's own parser: every function declaration, method, constructor, function expression and
 * arrow function with a block body, from its opening to its closing brace. The AssemblyScript
 * kernels (src/**\/asm/) are compiled for WebAssembly and excluded like the TypeScript build does.
 */
import { readdirSync, readFileSync } from 'node:fs';
import { join, relative } from 'node:path';
import ts from 'typescript';
import { describe, expect, it } from 'vitest';

const ROOT = join(import.meta.dirname, '..', '..');
const MAX_BODY_LINES = 85;

function sources(dir: string): string[] {
  const out: string[] = [];
  for (const e of readdirSync(dir, { withFileTypes: true })) {
    const p = join(dir, e.name);
    if (e.isDirectory()) {
      if (e.name !== 'asm') out.push(...sources(p));
    } else if (e.name.endsWith('.ts') && !e.name.endsWith('.d.ts')) out.push(p);
  }
  return out;
}

/** [body lines, "file:line name"] of every function in the source text. */
export function functionLengths(fileName: string, text: string): Array<[number, string]> {
  const sf = ts.createSourceFile(fileName, text, ts.ScriptTarget.Latest, true);
  const out: Array<[number, string]> = [];
  const visit = (n: ts.Node): void => {
    if ((ts.isFunctionDeclaration(n) || ts.isMethodDeclaration(n) || ts.isConstructorDeclaration(n) || ts.isFunctionExpression(n) || ts.isArrowFunction(n)) && n.body && ts.isBlock(n.body)) {
      const a = sf.getLineAndCharacterOfPosition(n.body.getStart()).line;
      const b = sf.getLineAndCharacterOfPosition(n.body.getEnd()).line;
      const name = n.name ? n.name.getText() : ts.isVariableDeclaration(n.parent) ? n.parent.name.getText() : '(anonymous)';
      out.push([b - a + 1, `${fileName}:${a + 1} ${name}`]);
    }
    ts.forEachChild(n, visit);
  };
  visit(sf);
  return out;
}

describe('function length', () => {
  it(`no function in src has more than ${MAX_BODY_LINES} lines of body`, () => {
    const long: string[] = [];
    for (const f of sources(join(ROOT, 'src')))
      for (const [n, where] of functionLengths(relative(ROOT, f), readFileSync(f, 'utf8'))) if (n > MAX_BODY_LINES) long.push(`${where}: ${n} lines`);
    expect(long).toEqual([]);
  });
  it('counts a long function as long (the check can fail)', () => {
    const body = Array.from({ length: MAX_BODY_LINES + 5 }, (_, i) => `  const v${i} = ${i};`).join('\n');
    const [[n]] = functionLengths('x.ts', `function f() {\n${body}\n}\n`) as [[number, string]];
    expect(n).toBe(MAX_BODY_LINES + 7);
  });
});
