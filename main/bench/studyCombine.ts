/**
 * The study screen's combination: the records it names, found in the runs folder, put
 * through `rateline combine` itself (main/cli/commands/combine.ts, with its output handed
 * here), so that the screen shows the command's numbers to the last digit. Bad input
 * comes back as the command's own one sentence.
 */
import { join } from 'node:path';
import type { RequestOf } from '../bridge/contract';
import { InputError } from '../cli/common/cliErrors';
import { combineRuns } from '../cli/commands/combine';
import { RunFileError } from '../../acquisition/files/runFile';
import { RunRecordError } from '../../acquisition/record/journalReader';
import { StudyFileError } from '../../acquisition/files/studyFile';
import { Refusal } from './refusal';
import { resolveRecordName } from './runsFolder';

export async function combineInFolder(dataDir: string, req: RequestOf<'combineRuns'>): Promise<{ text: string; notes: string[]; result: Record<string, unknown> }> {
  const files: string[] = [];
  for (const name of req.files) files.push(await resolveRecordName(dataDir, name));
  const argv = [...files, '--by', req.by];
  if (req.reagent) argv.push('--reagent', req.reagent);
  if (req.followed) argv.push('--followed', req.followed);
  if (req.predictAt_C !== undefined) argv.push('--predict-at-c', String(req.predictAt_C));
  const once = async (extra: string[]) => {
    const out: string[] = [];
    const notes: string[] = [];
    try {
      await combineRuns([...argv, ...extra], { log: (t) => out.push(t), error: (t) => notes.push(t) });
    } catch (err) {
      if (err instanceof InputError || err instanceof RunFileError || err instanceof RunRecordError || err instanceof StudyFileError) {
        throw new Refusal(err.message.replace(/^rateline combine: /, 'combine: '));
      }
      throw err;
    }
    return { out: out.join('\n'), notes };
  };
  const json = await once(['--format', 'json']);
  // The text report of the same runs; the study is saved with this pass, once.
  const save = req.saveAs ? ['--save-study', join(dataDir, req.saveAs.name), '--safety-note', req.saveAs.safetyNote] : [];
  const text = await once(['--format', 'text', ...save]);
  return { text: text.out, notes: text.notes, result: JSON.parse(json.out) as Record<string, unknown> };
}
