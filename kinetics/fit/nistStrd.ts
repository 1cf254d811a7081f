/**
 * Reader for the NIST Statistical Reference Datasets (StRD) text files that the
 * fitting core is checked against: data columns (y, x), starting values and the
 * certified estimates, standard deviations, residual SD and residual sum of squares.
 * Text in, plain data out (the caller reads the file), so it stays platform-free.
 */

export interface StrdParameter {
  name: string;
  /** Starting values (nonlinear datasets: Start 1, Start 2); empty for linear ones. */
  starts: number[];
  certified: number;
  certifiedSd: number;
}

export interface StrdDataset {
  name: string;
  parameters: StrdParameter[];
  residualSd: number;
  residualSumOfSquares: number | null;
  rSquared: number | null;
  x: Float64Array;
  y: Float64Array;
}

const NUM = '[-+]?(?:\\d+\\.?\\d*|\\.\\d+)(?:[eE][-+]?\\d+)?';

export function parseStrd(text: string): StrdDataset {
  const lines = text.split(/\r?\n/);
  const name = /Dataset Name:\s+(\S+)/.exec(text)?.[1] ?? 'unknown';
  const parameters: StrdParameter[] = [];
  const nonlinear = new RegExp(`^\\s*(b\\d+)\\s*=\\s*(${NUM})\\s+(${NUM})\\s+(${NUM})\\s+(${NUM})\\s*$`, 'i');
  const linear = new RegExp(`^\\s*(B\\d+)\\s+(${NUM})\\s+(${NUM})\\s*$`);
  let dataStart = -1;
  for (let i = 0; i < lines.length; i++) {
    const line = lines[i]!;
    const nl = nonlinear.exec(line);
    if (nl) {
      parameters.push({ name: nl[1]!, starts: [Number(nl[2]), Number(nl[3])], certified: Number(nl[4]), certifiedSd: Number(nl[5]) });
      continue;
    }
    const li = linear.exec(line);
    if (li) {
      parameters.push({ name: li[1]!, starts: [], certified: Number(li[2]), certifiedSd: Number(li[3]) });
      continue;
    }
    if (/^Data:\s+y\s+x\s*$/.test(line)) dataStart = i + 1;
  }
  const grab = (label: string): number | null => {
    const m = new RegExp(`${label}:?\\s+(${NUM})`).exec(text);
    return m ? Number(m[1]) : null;
  };
  const residualSd = grab('Residual Standard Deviation');
  if (residualSd === null || dataStart < 0 || parameters.length === 0) throw new Error(`${name}: not a StRD file this reader understands`);
  const xs: number[] = [];
  const ys: number[] = [];
  const row = new RegExp(`^\\s*(${NUM})\\s+(${NUM})\\s*$`);
  for (let i = dataStart; i < lines.length; i++) {
    const m = row.exec(lines[i]!);
    if (!m) continue;
    ys.push(Number(m[1]));
    xs.push(Number(m[2]));
  }
  return {
    name,
    parameters,
    residualSd,
    residualSumOfSquares: grab('Residual Sum of Squares'),
    rSquared: grab('R-Squared'),
    x: Float64Array.from(xs),
    y: Float64Array.from(ys),
  };
}
