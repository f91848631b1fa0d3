/**
 * Sharing a setup by URL: the preset JSON, deflated and base64url-encoded, in the fragment
 * (`#setup=…`), so it never reaches a server. Decoding caps both the link and the inflated text
 * (a small link cannot expand into a huge document) and validates the result like a file import.
 */
import type { PresetResult } from '../../presets/issues';
import { MAX_PRESET_CHARS, parsePresetText } from '../../presets/load';
import type { Preset } from '../../presets/schema';

export const SHARE_KEY = 'setup';
/** Longest encoded fragment accepted (characters). */
export const MAX_SHARE_CHARS = 200_000;

function toBase64Url(bytes: Uint8Array): string {
  let binary = '';
  for (let i = 0; i < bytes.length; i += 0x8000) binary += String.fromCharCode(...bytes.subarray(i, i + 0x8000));
  return btoa(binary).replace(/\+/g, '-').replace(/\//g, '_').replace(/=+$/, '');
}

function fromBase64Url(text: string): Uint8Array | null {
  if (!/^[A-Za-z0-9_-]*$/.test(text)) return null;
  const padded = text.replace(/-/g, '+').replace(/_/g, '/') + '='.repeat((4 - (text.length % 4)) % 4);
  try {
    const binary = atob(padded);
    const bytes = new Uint8Array(binary.length);
    for (let i = 0; i < binary.length; i++) bytes[i] = binary.charCodeAt(i);
    return bytes;
  } catch {
    return null;
  }
}

async function collect(stream: ReadableStream<Uint8Array>, limit: number): Promise<Uint8Array | null> {
  const reader = stream.getReader();
  const chunks: Uint8Array[] = [];
  let total = 0;
  for (;;) {
    const { done, value } = await reader.read();
    if (done) break;
    total += value.length;
    if (total > limit) {
      await reader.cancel();
      return null;
    }
    chunks.push(value);
  }
  const out = new Uint8Array(total);
  let at = 0;
  for (const chunk of chunks) {
    out.set(chunk, at);
    at += chunk.length;
  }
  return out;
}

export async function encodeShareFragment(preset: Preset): Promise<string> {
  const bytes = new TextEncoder().encode(JSON.stringify(preset));
  const deflated = await collect(new Blob([bytes]).stream().pipeThrough(new CompressionStream('deflate-raw')), Infinity);
  return `${SHARE_KEY}=${toBase64Url(deflated ?? new Uint8Array())}`;
}

/** The encoded setup in a location hash, or null when the hash carries none. */
export function shareTokenFromHash(hash: string): string | null {
  const params = new URLSearchParams(hash.replace(/^#/, ''));
  return params.get(SHARE_KEY);
}

export async function decodeShareToken(token: string): Promise<PresetResult<Preset>> {
  const fail = (message: string): PresetResult<Preset> => ({ ok: false, issues: [{ path: '(link)', message }] });
  if (token.length > MAX_SHARE_CHARS) return fail(`is longer than ${MAX_SHARE_CHARS} characters`);
  const bytes = fromBase64Url(token);
  if (!bytes) return fail('is not a valid setup link (bad encoding)');
  let inflated: Uint8Array | null;
  try {
    inflated = await collect(new Blob([bytes as Uint8Array<ArrayBuffer>]).stream().pipeThrough(new DecompressionStream('deflate-raw')), MAX_PRESET_CHARS * 4);
  } catch {
    return fail('is not a valid setup link (damaged data)');
  }
  if (!inflated) return fail(`expands beyond ${MAX_PRESET_CHARS} characters`);
  let text: string;
  try {
    text = new TextDecoder('utf-8', { fatal: true }).decode(inflated);
  } catch {
    return fail('is not a valid setup link (not text)');
  }
  return parsePresetText(text);
}
