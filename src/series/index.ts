/** Public surface of the series folder: order over time and its relaxation fits. */
export { fitRelaxation, fitBestRelaxation, relaxationAt, gamma, MIN_POINTS, BETA_MIN } from './relaxation.ts';
export type { RelaxationFit, RelaxationModel, RelaxationPoint } from './relaxation.ts';
