/** Names for runs, record files and sources, as the screen and the runs folder show them. */
import type { SourceChoice } from '../bridge/contract';

const pad = (n: number): string => String(n).padStart(2, '0');

/** run-20261201-184512-3f2a: sortable by start time, unique within a folder in practice. */
export function newRunId(started: Date): string {
  const stamp = `${started.getFullYear()}${pad(started.getMonth() + 1)}${pad(started.getDate())}-` +
    `${pad(started.getHours())}${pad(started.getMinutes())}${pad(started.getSeconds())}`;
  const tail = Math.floor(Math.random() * 0x10000).toString(16).padStart(4, '0');
  return `run-${stamp}-${tail}`;
}

export function recordFileName(runId: string): string {
  return `${runId}.jsonl`;
}

export function sourceLabel(choice: SourceChoice): string {
  switch (choice.kind) {
    case 'simulated': return `simulated instrument (demo data), ${choice.speed ?? 1}× speed`;
    case 'serial': return `serial instrument on ${choice.path} at ${choice.baud} baud`;
    case 'replay': return `recorded run ${choice.file} played back${choice.speed === 'max' ? ' as fast as possible' : choice.speed ? ` at ${choice.speed}×` : ''}`;
  }
}
