/** The page's run status, read by the browser tests (`document.body.dataset.status`). */
export type Status = 'loading' | 'running' | 'done' | 'invalid' | 'error';

export function setStatus(status: Status): void {
  document.body.dataset.status = status;
}

export function currentStatus(): string | undefined {
  return document.body.dataset.status;
}
