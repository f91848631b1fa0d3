/** The sheet engine's event queue: earliest (time, kind) first, payload kept with its event, slots reused. */
import { describe, expect, it } from 'vitest';
import { SeededRandom } from '../../../src/ions/random';
import { EventQueue } from '../../../src/physics/spaceCharge/eventQueue';

function drain(q: EventQueue): { time: number; kind: number; a: number; speed: number }[] {
  const out = [];
  while (q.length > 0) {
    const s = q.slot[0];
    out.push({ time: q.time[0], kind: q.kind[0], a: q.a[s], speed: q.speed[s] });
    q.pop();
  }
  return out;
}

describe('EventQueue', () => {
  it.each([false, true])('pops in (time, kind) order with each event its own payload (bulk %s)', (bulk) => {
    const rng = new SeededRandom(7);
    const q = new EventQueue();
    q.clear(bulk);
    const pushed: { time: number; kind: number; a: number; speed: number }[] = [];
    for (let i = 0; i < 500; i++) {
      const time = Math.floor(rng.uniform() * 50); // many ties in time
      const kind = Math.floor(rng.uniform() * 3);
      q.push(time, kind, i, -1, 0, 0, 1, time * 10 + kind);
      pushed.push({ time, kind, a: i, speed: time * 10 + kind });
    }
    if (bulk) q.heapify();
    const popped = drain(q);
    expect(popped).toHaveLength(500);
    for (let i = 1; i < popped.length; i++) {
      const [p, c] = [popped[i - 1], popped[i]];
      expect(p.time < c.time || (p.time === c.time && p.kind <= c.kind)).toBe(true);
    }
    for (const e of popped) expect(e.speed).toBe(pushed[e.a].time * 10 + pushed[e.a].kind);
    expect(new Set(popped.map((e) => e.a)).size).toBe(500);
  });

  it('reuses the slot of a popped event without touching queued ones', () => {
    const q = new EventQueue();
    q.clear(false);
    q.push(2, 0, 20, -1, 0, 0, 1, 2.5);
    q.push(1, 0, 10, -1, 0, 0, 1, 1.5);
    q.pop(); // time 1 leaves; its slot is free
    q.push(3, 0, 30, -1, 0, 0, -1, 3.5);
    expect(drain(q)).toEqual([
      { time: 2, kind: 0, a: 20, speed: 2.5 },
      { time: 3, kind: 0, a: 30, speed: 3.5 },
    ]);
  });
});
