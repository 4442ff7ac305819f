// docs/CLI.md documents every command and option the command line has: each option its --help
// prints (program and every command) appears in the doc under that command, and the generated
// command reference (scripts/cli-docs.ts) is the one the current main/cli.ts gives.
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { buildProgram } from '../main/cli';
import { BEGIN, END, cliReference, withReference } from '../scripts/cli-docs';

const doc = readFileSync(new URL('../docs/CLI.md', import.meta.url), 'utf8');

/** The long option names (--db, --no-reduce, …) in a commander help text's Options section. */
function helpOptions(help: string): string[] {
  const section = help.split(/\n(?=\S)/).find((p) => p.startsWith('Options:')) ?? '';
  return [...section.matchAll(/^\s+(?:-\w, )?(--[a-z][a-z-]*)/gm)].map((m) => m[1]);
}

/** The text of the doc's section of one command (from its ### heading to the next). */
function section(name: string): string {
  const start = doc.indexOf(`### \`${name}\``);
  if (start < 0) return '';
  const next = doc.indexOf('\n### ', start + 4);
  return doc.slice(start, next < 0 ? doc.indexOf(END) : next);
}

describe('docs/CLI.md against the command line', () => {
  const program = buildProgram();

  it('the generated command reference is up to date (npx tsx scripts/cli-docs.ts rewrites it)', () => {
    expect(doc).toContain(BEGIN);
    expect(withReference(doc, cliReference(buildProgram()))).toBe(doc);
  });

  it('every option of the program help and of every command help is in the doc, under its command', () => {
    const global = helpOptions(program.helpInformation());
    expect(global).toEqual(expect.arrayContaining(['--db', '--session', '--reviewer', '--actor', '--version', '--help']));
    const globalSection = doc.slice(doc.indexOf('### Global options'), doc.indexOf('### `'));
    for (const o of global) expect(globalSection, `global option ${o}`).toContain(o);
    expect(program.commands.length).toBeGreaterThanOrEqual(10);
    for (const cmd of program.commands) {
      const opts = helpOptions(cmd.helpInformation()).filter((o) => o !== '--help');
      const text = section(cmd.name());
      expect(text, `a section for ${cmd.name()}`).not.toBe('');
      for (const o of opts) expect(text, `${cmd.name()} ${o}`).toContain(`\`${o}`);
    }
  });

  it('the options the issue named are there: --stale of runs and reduce, sheet --cp-runs, --reviewer', () => {
    expect(section('runs')).toContain('`--stale`');
    expect(section('reduce')).toContain('`--stale`');
    expect(section('sheet')).toContain('`--cp-runs <list>`');
    expect(doc).toContain('`--reviewer <name>`');
    // and the help parser finds options in a help text (the test above would pass on an empty list)
    expect(helpOptions(program.commands.find((c) => c.name() === 'reduce')!.helpInformation())).toEqual(['--runs', '--set', '--save', '--stale', '--help']);
  });
});
