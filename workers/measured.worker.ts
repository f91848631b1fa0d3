/**
 * Measured spectra in a Web Worker, exposed with comlink: reading a file and the fit run here so
 * that the page stays responsive (a fit is tens of simulations). Imports nothing that touches the DOM.
 */
import * as Comlink from 'comlink';
import { importTransferables, measuredService, profileTransferables, type MeasuredService } from '../src/measured/service';

const api: MeasuredService = {
  read: (text, options) => {
    const result = measuredService.read(text, options);
    return Comlink.transfer(result, importTransferables(result));
  },
  analyse: (request) => {
    const outcome = measuredService.analyse(request);
    return Comlink.transfer(outcome, profileTransferables(outcome));
  },
};

Comlink.expose(api);
