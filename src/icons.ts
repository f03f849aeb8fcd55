/**
 * Icons of Polyadic, drawn for this project: three overlapping sets whose common part is
 * filled, the region co-information measures in an information diagram (Yeung 1991).
 */
import { LabIcon } from '@jupyterlab/ui-components';

import polyadicSvg from '../style/icons/polyadic.svg';

/** The Polyadic icon: sidebar tab, command palette and Settings Editor. */
export const polyadicIcon = new LabIcon({
  name: 'jupyterlab-polyadic:polyadic',
  svgstr: polyadicSvg
});
