/**
 * The Polyadic side panel: widget, models and the notebook follower.
 */
export { PanelModel } from './model';
export { PolyadicPanel } from './panel';
export { DefaultsModel, describeSettings } from './defaults/model';
export type { IDefaultRow } from './defaults/model';
export { DefaultsView } from './defaults/view';
export { followSettings } from './defaults/settings';
export { SourceModel } from './source/model';
export type { IKernelSummary, INotebookSummary } from './source/model';
export { SourceView } from './source/view';
export { followNotebooks } from './source/tracker';
