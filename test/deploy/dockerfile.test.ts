// The structure of deploy/Dockerfile (no container engine here to build it): stages, production-only
// dependencies, an unprivileged user, a health check on the port the command opens, the program's entry point.
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { packageRoot } from '../../src/problem/proto-options.js';

const root = packageRoot();
/** Instructions with their continuation lines joined, comments dropped. */
const instructions = readFileSync(join(root, 'deploy', 'Dockerfile'), 'utf8')
  .replace(/\\\n/g, ' ')
  .split('\n')
  .map((line) => line.trim())
  .filter((line) => line !== '' && !line.startsWith('#'))
  .map((line) => {
    const [keyword, ...rest] = line.split(/\s+/);
    return { keyword: keyword.toUpperCase(), text: rest.join(' ') };
  });

const stages: { name: string | undefined; body: typeof instructions }[] = [];
for (const instruction of instructions) {
  if (instruction.keyword === 'FROM') stages.push({ name: /\bAS\s+(\S+)/i.exec(instruction.text)?.[1], body: [] });
  else stages.at(-1)?.body.push(instruction);
}
const final = stages.at(-1)!;
const last = (keyword: string) => final.body.filter((i) => i.keyword === keyword).at(-1);
const execForm = (text: string): string[] => JSON.parse(text) as string[];

describe('deploy/Dockerfile', () => {
  it('is multi-stage: built with dev dependencies, shipped with `npm ci --omit=dev`, copying only from earlier stages', () => {
    expect(stages.length).toBeGreaterThanOrEqual(2);
    const names = stages.map((s) => s.name);
    for (const [index, stage] of stages.entries()) {
      for (const copy of stage.body.filter((i) => i.keyword === 'COPY' && i.text.includes('--from='))) {
        expect(names.slice(0, index)).toContain(/--from=(\S+)/.exec(copy.text)![1]);
      }
    }
    const runs = stages.flatMap((s) => s.body.filter((i) => i.keyword === 'RUN').map((i) => i.text));
    expect(runs.some((r) => /npm ci --omit=dev/.test(r))).toBe(true);
    // The final stage installs nothing itself: no compilers, no dev dependencies.
    expect(final.body.filter((i) => i.keyword === 'RUN').some((i) => /npm (ci|install)|apt-get install/.test(i.text))).toBe(false);
    expect(final.body.some((i) => i.keyword === 'COPY' && /node_modules/.test(i.text) && /--from=deps/.test(i.text))).toBe(true);
  });

  it('runs as an unprivileged user', () => {
    const user = last('USER')?.text;
    expect(user).toBeDefined();
    expect(user).not.toMatch(/^(root|0)(:|$)/);
  });

  it('starts the program at its package entry point and checks health on the plaintext health port it opens', () => {
    const pkg = JSON.parse(readFileSync(join(root, 'package.json'), 'utf8')) as { bin: Record<string, string> };
    const entry = execForm(last('ENTRYPOINT')!.text);
    expect(entry).toEqual(['node', pkg.bin['renyi-bound']]);
    const command = execForm(last('CMD')!.text);
    expect(command[0]).toBe('serve');
    const healthPort = command[command.indexOf('--health-port') + 1];
    const servicePort = command[command.indexOf('--port') + 1];
    expect(last('EXPOSE')!.text.split(/\s+/)).toEqual(expect.arrayContaining([servicePort, healthPort]));
    const check = last('HEALTHCHECK')!.text;
    const probe = execForm(check.slice(check.indexOf('CMD') + 3).trim());
    expect(probe.slice(0, 4)).toEqual(['node', pkg.bin['renyi-bound'], 'health', '--server']);
    expect(probe[4]).toBe(`127.0.0.1:${healthPort}`);
  });
});
