/** The lab-notebook page: self-contained (no script, no external resource) and holding what a notebook needs. */
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { main, type CliIo } from '../../src/cli';
import { TOOL_VERSION } from '../../src/version';

describe('--report', () => {
  it('writes one self-contained HTML page with settings, results, plots, record, version, seed and the caution; never replaces a file', () => {
    const written = new Map<string, string>();
    const io: CliIo = {
      out: () => undefined,
      err: (t) => void written.set('stderr', (written.get('stderr') ?? '') + t),
      readFile: (p) => readFileSync(p, 'utf8'),
      writeFile: (p, text, overwrite) => {
        if (written.has(p) && !overwrite) throw Object.assign(new Error('exists'), { code: 'EEXIST' });
        written.set(p, text);
      },
    };
    expect(main(['presets/demo-linear-delayed.json', '--ions', '2000', '--seed', '5', '--report', 'run.html'], io)).toBe(0);
    const page = written.get('run.html')!;
    expect(page).toMatch(/^<!doctype html>/);
    expect(page).not.toMatch(/<script|<link|src="http|href="http/i);
    expect(page).toContain('High-voltage caution');
    expect(page).toContain(`tof-flight-bench ${TOOL_VERSION}`);
    expect(page).toContain('seed 5');
    expect(page).toContain('ideal-detector R');
    expect(page).toContain('morinex-12 (invented)');
    expect((page.match(/<svg /g) ?? []).length).toBe(2);
    expect(page).toContain('Method record');
    expect(page).toContain('&quot;delay_ns&quot;: 228');
    expect(main(['presets/demo-linear-delayed.json', '--ions', '2000', '--report', 'run.html'], io)).toBe(2);
    expect(written.get('stderr')).toContain('run.html: cannot write the report (EEXIST)');
    expect(main(['presets/demo-linear-delayed.json', '--report'], io)).toBe(2);
  });
});
