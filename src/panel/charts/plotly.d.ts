/**
 * The few parts of plotly.js (the prebuilt minified bundle) that Polyadic's charts use. The
 * bundle ships no types; these follow plotly.js' documented function reference.
 */
declare module 'plotly.js-dist-min' {
  /** A trace: plain data and style, as plotly.js documents it. */
  export type Data = Record<string, unknown>;
  /** A figure layout. */
  export type Layout = Record<string, unknown>;
  /** Chart configuration. */
  export type Config = Record<string, unknown>;

  /** A point of a click or hover event. */
  export interface PlotDatum {
    curveNumber: number;
    pointNumber: number;
    pointIndex?: number;
    x: unknown;
    y: unknown;
  }

  /** The event of `plotly_click`. */
  export interface PlotMouseEvent {
    points: PlotDatum[];
  }

  /** A div that plotly has drawn into. */
  export interface PlotlyHTMLElement extends HTMLDivElement {
    on(event: 'plotly_click', handler: (event: PlotMouseEvent) => void): void;
    removeAllListeners?(event: string): void;
  }

  /** Options of an image export. */
  export interface ImageOptions {
    format: 'png' | 'svg' | 'jpeg' | 'webp';
    width: number;
    height: number;
    /** Pixel ratio of a raster image (2 doubles the pixels of `width` × `height`). */
    scale?: number;
    filename?: string;
  }

  /** A figure to draw off screen: what `react` takes, as one object. */
  export interface Figure {
    data: Data[];
    layout: Layout;
  }

  /** Draw or redraw a chart in `root`. */
  export function react(root: HTMLElement, data: Data[], layout?: Layout, config?: Config): Promise<PlotlyHTMLElement>;
  /** Remove the chart and its listeners from `root`. */
  export function purge(root: HTMLElement): void;
  /** Render a chart (drawn in a div, or a figure drawn off screen) to an image data URL. */
  export function toImage(root: HTMLElement | Figure, options: ImageOptions): Promise<string>;
  /** Render a chart to an image and download it. */
  export function downloadImage(root: HTMLElement, options: ImageOptions): Promise<string>;
  /** Plot helpers. */
  export const Plots: { resize(root: HTMLElement): Promise<void> };
}
