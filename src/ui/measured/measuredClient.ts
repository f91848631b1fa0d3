/**
 * The page's handle on the measured-spectrum worker: read and analyse run there; cancel terminates
 * the worker at once (a fit in progress stops), rejects what was pending with CancelledError and
 * starts a fresh worker.
 */
import * as Comlink from 'comlink';
import type { ImportOptions, ImportResult } from '../../measured/importSpectrum';
import type { AnalyseOutcome, AnalyseRequest, MeasuredService } from '../../measured/service';
import { CancelledError } from '../../tuning/errors';

export class MeasuredClient {
  private worker: Worker | null = null;
  private remote: Comlink.Remote<MeasuredService> | null = null;
  private readonly pending = new Set<(error: Error) => void>();

  read(text: string, options: ImportOptions): Promise<ImportResult> {
    return this.guard((r) => r.read(text, options) as Promise<ImportResult>);
  }

  analyse(request: AnalyseRequest): Promise<AnalyseOutcome> {
    return this.guard((r) => r.analyse(request) as Promise<AnalyseOutcome>);
  }

  cancel(): void {
    for (const reject of this.pending) reject(new CancelledError());
    this.pending.clear();
    this.worker?.terminate();
    this.worker = null;
    this.remote = null;
  }

  dispose(): void {
    this.cancel();
  }

  private guard<T>(call: (remote: Comlink.Remote<MeasuredService>) => Promise<T>): Promise<T> {
    if (!this.remote) {
      this.worker = new Worker(new URL('../../../workers/measured.worker.ts', import.meta.url), { type: 'module' });
      this.remote = Comlink.wrap<MeasuredService>(this.worker);
    }
    const remote = this.remote;
    return new Promise<T>((resolve, reject) => {
      const fail = (error: Error): void => reject(error);
      this.pending.add(fail);
      call(remote).then(
        (value) => {
          if (!this.pending.delete(fail)) return; // cancelled meanwhile
          resolve(value);
        },
        (error: unknown) => {
          if (!this.pending.delete(fail)) return;
          reject(error instanceof Error ? error : new Error(String(error)));
        },
      );
    });
  }
}
