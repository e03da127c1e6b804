/** Public surface of the trend folder: a reading against a process variable, fitted by a weighted straight line. */
export { fitLine, lineAt, pointSe, seFromInterval, usablePoint, LINE_LEVEL, LINE_MIN_DISTINCT_X } from './lineFit.ts';
export type { LineFit, LinePoint, TrendDirection } from './lineFit.ts';
export { parseTrendTable, TREND_TABLE_MAX_CHARS } from './table.ts';
export type { TrendTableRow } from './table.ts';
