/**
 * What jsdom lacks and Lumino reads when its modules load (common practice: JupyterLab's own
 * jest set-up defines the same). Import it first in a spec that runs under jsdom.
 */
if (typeof (globalThis as { DragEvent?: unknown }).DragEvent === 'undefined') {
  // Lumino's drag and drop extends DragEvent; jsdom has MouseEvent, which DragEvent extends
  (globalThis as { DragEvent?: unknown }).DragEvent = class DragEvent extends MouseEvent {};
}

export {};
