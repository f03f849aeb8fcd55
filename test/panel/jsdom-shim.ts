/**
 * What jsdom lacks and Lumino or apache-arrow read when their modules load (common practice:
 * JupyterLab's own jest set-up defines the same). Import it first in a spec that runs under jsdom.
 */
import { TextDecoder, TextEncoder } from 'util';

if (typeof globalThis.TextDecoder === 'undefined') {
  // apache-arrow's UTF-8 helpers make their coders at load time; Node's are the standard ones
  Object.assign(globalThis, { TextDecoder, TextEncoder });
}
if (typeof (globalThis as { DragEvent?: unknown }).DragEvent === 'undefined') {
  // Lumino's drag and drop extends DragEvent; jsdom has MouseEvent, which DragEvent extends
  (globalThis as { DragEvent?: unknown }).DragEvent = class DragEvent extends MouseEvent {};
}

export {};
