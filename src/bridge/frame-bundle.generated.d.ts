/**
 * Types of the module scripts/build-worker.mjs generates: the bridge's frame worker, bundled
 * with esbuild, as source text. The script writes lib/bridge/frame-bundle.generated.js (beside
 * the compiled browser.js, which imports it) before the extension is built; nothing in jest
 * imports it.
 */

/** Source of the frame worker bundle (an IIFE script for a dedicated Worker). */
export declare const FRAME_WORKER_SOURCE: string;
