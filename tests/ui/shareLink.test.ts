import { deflateRawSync } from 'node:zlib';
import { describe, expect, it } from 'vitest';
import { decodeShareToken, encodeShareFragment, MAX_SHARE_CHARS, SHARE_KEY, shareTokenFromHash } from '../../src/ui/io/shareLink';
import { DEMO_FILES, demoPreset } from './helpers';

const base64url = (bytes: Uint8Array): string => Buffer.from(bytes).toString('base64url');

describe('sharing a setup by URL', () => {
  for (const name of DEMO_FILES) {
    it(`${name}: encode → decode gives the same preset`, async () => {
      const preset = demoPreset(name);
      const fragment = await encodeShareFragment(preset);
      expect(fragment.startsWith(`${SHARE_KEY}=`)).toBe(true);
      // Compressed: far shorter than the JSON itself.
      expect(fragment.length).toBeLessThan(JSON.stringify(preset).length);
      const token = shareTokenFromHash(`#${fragment}`);
      expect(token).not.toBeNull();
      const back = await decodeShareToken(token!);
      expect(back).toEqual({ ok: true, value: preset });
    });
  }

  it('the token is the deflate-raw of the JSON in base64url (readable by any zlib)', async () => {
    const preset = demoPreset('demo-linear-delayed');
    const token = shareTokenFromHash('#' + (await encodeShareFragment(preset)))!;
    const ours = await decodeShareToken(base64url(deflateRawSync(Buffer.from(JSON.stringify(preset)))));
    expect(ours).toEqual({ ok: true, value: preset });
    expect(token).toMatch(/^[A-Za-z0-9_-]+$/);
  });

  it('refuses damaged, foreign, oversized and expanding links', async () => {
    const bad = async (token: string, message: RegExp): Promise<void> => {
      const r = await decodeShareToken(token);
      expect(r.ok).toBe(false);
      if (!r.ok) expect(r.issues.map((i) => i.message).join(' ')).toMatch(message);
    };
    await bad('not base64!', /bad encoding/);
    await bad(base64url(new Uint8Array([1, 2, 3, 4, 5, 6, 7, 8])), /damaged|not text|JSON/);
    await bad('A'.repeat(MAX_SHARE_CHARS + 1), /longer than/);
    // 8 MB of spaces deflate to a few kB: the decoder stops once the text passes its cap.
    await bad(base64url(deflateRawSync(Buffer.alloc(8_000_000, 32))), /expands beyond/);
    await bad(base64url(deflateRawSync(Buffer.from('{"formatVersion": 1}'))), /is required/);
  });

  it('finds the setup among other fragment parameters', () => {
    expect(shareTokenFromHash('#a=1&setup=abc_-')).toBe('abc_-');
    expect(shareTokenFromHash('')).toBeNull();
  });
});
