/**
 * The sheet engine's event queue: a binary min-heap on (time, kind), kinds breaking ties in their
 * numeric order. Only the ordering keys and a slot number move in the heap; the rest of an event
 * (the two sheets, their versions when it was scheduled, the side and speed of a plane crossing)
 * stays in its slot, so a sift moves three values instead of eight. Typed arrays throughout, grown
 * by doubling and reused from shot to shot: pushing and popping allocate nothing.
 */
export class EventQueue {
  /** Events queued; the earliest is at heap position 0. */
  length = 0;
  time = new Float64Array(0);
  kind = new Uint8Array(0);
  slot = new Int32Array(0);
  /** Per slot: the sheets (b = −1 for a single-sheet event), their versions, exit side and speed. */
  a = new Int32Array(0);
  b = new Int32Array(0);
  versionA = new Int32Array(0);
  versionB = new Int32Array(0);
  side = new Int8Array(0);
  speed = new Float64Array(0);

  private capacity = 0;
  /** Slots ever handed out since the last clear; freed slots wait on the free stack. */
  private slotsUsed = 0;
  private free = new Int32Array(0);
  private freeCount = 0;
  /** While set, push appends without ordering (heapify orders them afterwards, in O(n)). */
  private bulk = false;

  /** Drops every event; with `bulk`, later pushes append unordered until heapify(). */
  clear(bulk: boolean): void {
    this.length = 0;
    this.slotsUsed = 0;
    this.freeCount = 0;
    this.bulk = bulk;
  }

  /** Orders the events appended in bulk mode and leaves it. */
  heapify(): void {
    this.bulk = false;
    for (let i = (this.length >> 1) - 1; i >= 0; i--) this.siftDown(i);
  }

  push(time: number, kind: number, a: number, b: number, versionA: number, versionB: number, side: number, speed: number): void {
    if (this.length === this.capacity) this.grow();
    const slot = this.freeCount > 0 ? this.free[--this.freeCount] : this.slotsUsed++;
    this.a[slot] = a;
    this.b[slot] = b;
    this.versionA[slot] = versionA;
    this.versionB[slot] = versionB;
    this.side[slot] = side;
    this.speed[slot] = speed;
    let i = this.length++;
    while (i > 0 && !this.bulk) {
      const parent = (i - 1) >> 1;
      if (this.time[parent] < time || (this.time[parent] === time && this.kind[parent] <= kind)) break;
      this.time[i] = this.time[parent];
      this.kind[i] = this.kind[parent];
      this.slot[i] = this.slot[parent];
      i = parent;
    }
    this.time[i] = time;
    this.kind[i] = kind;
    this.slot[i] = slot;
  }

  /** Removes the earliest event; its slot (read before the call) may be reused by the next push. */
  pop(): void {
    this.free[this.freeCount++] = this.slot[0];
    const last = --this.length;
    if (last === 0) return;
    this.time[0] = this.time[last];
    this.kind[0] = this.kind[last];
    this.slot[0] = this.slot[last];
    this.siftDown(0);
  }

  /** Moves the entry at `start` down until both children come later. */
  private siftDown(start: number): void {
    const len = this.length;
    const time = this.time;
    const kind = this.kind;
    const slot = this.slot;
    const t = time[start];
    const k = kind[start];
    const s = slot[start];
    let i = start;
    for (;;) {
      let c = 2 * i + 1;
      if (c >= len) break;
      if (c + 1 < len && (time[c + 1] < time[c] || (time[c + 1] === time[c] && kind[c + 1] < kind[c]))) c++;
      if (t < time[c] || (t === time[c] && k <= kind[c])) break;
      time[i] = time[c];
      kind[i] = kind[c];
      slot[i] = slot[c];
      i = c;
    }
    if (i === start) return;
    time[i] = t;
    kind[i] = k;
    slot[i] = s;
  }

  /** Heap and slots grow together: slots in use never outnumber the events queued. */
  private grow(): void {
    const c = Math.max(64, 2 * this.capacity);
    this.time = grown(this.time, new Float64Array(c));
    this.kind = grown(this.kind, new Uint8Array(c));
    this.slot = grown(this.slot, new Int32Array(c));
    this.a = grown(this.a, new Int32Array(c));
    this.b = grown(this.b, new Int32Array(c));
    this.versionA = grown(this.versionA, new Int32Array(c));
    this.versionB = grown(this.versionB, new Int32Array(c));
    this.side = grown(this.side, new Int8Array(c));
    this.speed = grown(this.speed, new Float64Array(c));
    this.free = grown(this.free, new Int32Array(c));
    this.capacity = c;
  }
}

function grown<T extends Float64Array | Int32Array | Uint8Array | Int8Array>(old: T, next: T): T {
  next.set(old);
  return next;
}
