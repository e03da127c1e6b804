/** One line of the bench's closing table: a figure beside its goal (issue "Speed to the native limit"). */
export interface GoalRow { what: string; value: string; goal: string; met: boolean }

/** The closing table: each figure, its goal and whether it was met. */
export function printGoalTable(rows: readonly GoalRow[]): void {
  const width = Math.max(50, ...rows.map((r) => r.what.length));
  console.log(`\n${'figure'.padEnd(width + 3)}${'value'.padEnd(40)}${'goal'.padEnd(12)}met`);
  for (const r of rows) console.log(`  ${r.what.padEnd(width)} ${r.value.padEnd(39)} ${r.goal.padEnd(11)} ${r.met ? 'yes' : 'NO'}`);
}
