/** Small DOM helpers: element lookup, element building, downloads, clipboard, the toast and dialogs. */

export function byId<T extends HTMLElement = HTMLElement>(id: string): T {
  const el = document.getElementById(id);
  if (!el) throw new Error(`missing element #${id}`);
  return el as T;
}

type Child = Node | string | null | undefined | false;

export function el<K extends keyof HTMLElementTagNameMap>(
  tag: K,
  props: Partial<Record<string, string>> = {},
  ...children: Child[]
): HTMLElementTagNameMap[K] {
  const node = document.createElement(tag);
  for (const [key, value] of Object.entries(props)) {
    if (value === undefined) continue;
    if (key === 'text') node.textContent = value;
    else if (key === 'className') node.className = value;
    else node.setAttribute(key, value);
  }
  for (const child of children) if (child !== null && child !== undefined && child !== false) node.append(child);
  return node;
}

export function downloadBlob(blob: Blob, fileName: string): void {
  const url = URL.createObjectURL(blob);
  const a = el('a', { href: url, download: fileName });
  document.body.append(a);
  a.click();
  a.remove();
  setTimeout(() => URL.revokeObjectURL(url), 10_000);
}

export function downloadText(text: string, fileName: string, type: string): void {
  downloadBlob(new Blob([text], { type }), fileName);
}

export async function copyText(text: string): Promise<boolean> {
  try {
    await navigator.clipboard.writeText(text);
    return true;
  } catch {
    return false;
  }
}

let toastTimer = 0;

/** A short message at the bottom; with an action button (e.g. Undo) when given. */
export function toast(message: string, action?: { label: string; run: () => void }, ms = 5000): void {
  const box = byId('toast');
  clearTimeout(toastTimer);
  box.replaceChildren(el('span', { text: message }));
  if (action) {
    const button = el('button', { type: 'button', text: action.label });
    button.addEventListener('click', () => {
      box.hidden = true;
      action.run();
    });
    box.append(button);
  }
  box.hidden = false;
  toastTimer = window.setTimeout(() => (box.hidden = true), ms);
}

/** A modal yes/no question; resolves true for OK. */
export function confirmDialog(title: string, text: string, okLabel = 'OK'): Promise<boolean> {
  const dialog = byId<HTMLDialogElement>('confirm-dialog');
  byId('confirm-title').textContent = title;
  byId('confirm-text').textContent = text;
  const ok = byId<HTMLButtonElement>('confirm-ok');
  const cancel = byId<HTMLButtonElement>('confirm-cancel');
  ok.textContent = okLabel;
  return new Promise((resolve) => {
    const finish = (answer: boolean): void => {
      ok.removeEventListener('click', onOk);
      cancel.removeEventListener('click', onCancel);
      dialog.removeEventListener('cancel', onCancel);
      if (dialog.open) dialog.close();
      resolve(answer);
    };
    const onOk = (): void => finish(true);
    const onCancel = (): void => finish(false);
    ok.addEventListener('click', onOk);
    cancel.addEventListener('click', onCancel);
    dialog.addEventListener('cancel', onCancel);
    dialog.showModal();
    cancel.focus();
  });
}

/** Tabs with arrow-key movement (WAI-ARIA tabs pattern). */
export function setUpTabs(list: HTMLElement, onShow?: (tabId: string) => void): (tabId: string) => void {
  const tabs = Array.from(list.querySelectorAll<HTMLButtonElement>('[role="tab"]'));
  const show = (id: string): void => {
    for (const tab of tabs) {
      const on = tab.id === id;
      tab.setAttribute('aria-selected', String(on));
      tab.tabIndex = on ? 0 : -1;
      const pane = document.getElementById(tab.getAttribute('aria-controls') ?? '');
      if (pane) pane.hidden = !on;
    }
    onShow?.(id);
  };
  for (const tab of tabs) {
    tab.addEventListener('click', () => show(tab.id));
    tab.addEventListener('keydown', (e) => {
      const i = tabs.indexOf(tab);
      let next = -1;
      if (e.key === 'ArrowRight') next = (i + 1) % tabs.length;
      else if (e.key === 'ArrowLeft') next = (i - 1 + tabs.length) % tabs.length;
      else if (e.key === 'Home') next = 0;
      else if (e.key === 'End') next = tabs.length - 1;
      if (next < 0) return;
      e.preventDefault();
      tabs[next].focus();
      show(tabs[next].id);
    });
  }
  return show;
}
