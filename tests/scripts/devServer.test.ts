/**
 * `npm start` is stopped by a SIGTERM to its process id (what a process manager, a terminal's job
 * control or a CI step sends): the dev server must go with it, not be left running in the background.
 * The script starts Vite through `exec`, so the shell npm runs it in is replaced by Vite and the
 * signal npm forwards reaches the server itself.
 */
import { execFileSync, spawn } from 'node:child_process';
import { connect } from 'node:net';
import { describe, expect, it } from 'vitest';

const portOpen = (port: number): Promise<boolean> =>
  new Promise((resolve) => {
    const socket = connect({ port, host: '127.0.0.1' });
    socket.once('connect', () => {
      socket.destroy();
      resolve(true);
    });
    socket.once('error', () => resolve(false));
  });

const alive = (pid: number): boolean => {
  try {
    process.kill(pid, 0);
    return true;
  } catch {
    return false;
  }
};

describe('npm start', () => {
  it('stops, dev server included, on SIGTERM to its process id', async () => {
    const npm = spawn('npm', ['start', '--', '--host', '127.0.0.1', '--port', '0'], { stdio: ['ignore', 'pipe', 'pipe'] });
    const descendants: number[] = [];
    try {
      let output = '';
      const port = await new Promise<number>((resolve, reject) => {
        const timer = setTimeout(() => reject(new Error(`no dev server address in: ${output}`)), 60_000);
        npm.stdout.on('data', (chunk: Buffer) => {
          output += chunk.toString();
          const m = /Local:\s+http:\/\/127\.0\.0\.1:(\d+)/.exec(output.replace(new RegExp(`${String.fromCharCode(27)}\\[[0-9;]*m`, 'g'), ''));
          if (m) {
            clearTimeout(timer);
            resolve(Number(m[1]));
          }
        });
      });
      expect(await portOpen(port)).toBe(true);
      // Everything npm started, to check (and, on failure, to stop) afterwards.
      const tree = (pid: number): number[] => {
        let kids: number[] = [];
        try {
          kids = execFileSync('ps', ['-o', 'pid=', '--ppid', String(pid)], { encoding: 'utf8' }).split('\n').map(Number).filter((n) => n > 0);
        } catch {
          // ps exits non-zero when the process has no children
        }
        return kids.flatMap((k) => [k, ...tree(k)]);
      };
      descendants.push(...tree(npm.pid!));
      expect(descendants.length).toBeGreaterThan(0);
      const exited = new Promise<void>((resolve) => npm.once('exit', () => resolve()));
      npm.kill('SIGTERM');
      await exited;
      for (let i = 0; i < 50 && descendants.some(alive); i++) await new Promise((r) => setTimeout(r, 100));
      expect(descendants.filter(alive)).toEqual([]);
      expect(await portOpen(port)).toBe(false);
    } finally {
      for (const pid of descendants) if (alive(pid)) process.kill(pid, 'SIGKILL');
      if (npm.exitCode === null) npm.kill('SIGKILL');
    }
  });
});
