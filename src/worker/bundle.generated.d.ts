/**
 * Types of the module scripts/build-worker.mjs generates: the engine worker, bundled with
 * esbuild, as source text. The script writes lib/worker/bundle.generated.js (beside the compiled
 * browser.js, which imports it) before the extension is built; nothing in jest imports it.
 */

/** Source of the engine worker bundle (an IIFE script for a dedicated Worker). */
export declare const ENGINE_WORKER_SOURCE: string;
