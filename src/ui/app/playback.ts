/** The 3D view's controls: play, pause and scrub the packets, speed, framing, cut view and picture. */
import { byId, downloadBlob } from '../dom';
import type { AnalyserScene } from '../scene/analyserScene';

const CONTROL_IDS = ['btn-play', 'time-scrub', 'play-speed', 'btn-view-all', 'btn-view-source', 'btn-view-end', 'cut-view', 'btn-scene-png'];

/** Wire the controls to `scene`, or disable them when there is no 3D view (no WebGL). */
export function wirePlayback(scene: AnalyserScene | null, baseName: () => string): void {
  if (!scene) {
    for (const id of CONTROL_IDS) (byId(id) as HTMLButtonElement).disabled = true;
    return;
  }
  const s = scene;
  const play = byId<HTMLButtonElement>('btn-play');
  const scrub = byId<HTMLInputElement>('time-scrub');
  const readout = byId('time-readout');
  s.onTime = (t, end) => {
    scrub.value = String(end > 0 ? Math.round((t / end) * 1000) : 0);
    readout.textContent = `t = ${(t * 1e6).toFixed(3)} µs`;
  };
  s.onPlayingChange = (on) => {
    play.textContent = on ? 'Pause' : 'Play';
    play.setAttribute('aria-pressed', String(on));
  };
  play.addEventListener('click', () => s.setPlaying(!s.isPlaying));
  scrub.addEventListener('input', () => {
    s.setPlaying(false);
    s.setTime((Number(scrub.value) / 1000) * s.endTime_s);
  });
  byId<HTMLSelectElement>('play-speed').addEventListener('change', (e) => s.setSpeed(Number((e.target as HTMLSelectElement).value)));
  byId('btn-view-all').addEventListener('click', () => s.frame('all'));
  byId('btn-view-source').addEventListener('click', () => s.frame('source'));
  byId('btn-view-end').addEventListener('click', () => s.frame('far'));
  byId<HTMLInputElement>('cut-view').addEventListener('change', (e) => s.setCutView((e.target as HTMLInputElement).checked));
  byId('btn-scene-png').addEventListener('click', () => void s.toBlob().then((b) => b && downloadBlob(b, `${baseName()}-3d.png`)));
  s.canvas.addEventListener('keydown', (e) => {
    if (e.key === ' ') {
      e.preventDefault();
      s.setPlaying(!s.isPlaying);
    }
  });
}
