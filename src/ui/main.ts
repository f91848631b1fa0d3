/** Browser entry point: styles, then the app. */
import 'lil-gui-stylesheet';
import 'uplot/dist/uPlot.min.css';
import './style.css';
import { startApp } from './app';

startApp().catch((err: unknown) => {
  document.body.dataset.status = 'error';
  const line = document.getElementById('status-line');
  if (line) line.textContent = `The app failed to start: ${(err as Error).message}`;
  console.error(err);
});
