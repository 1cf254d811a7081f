/**
 * Sample details, entered before or during the run and written into the run record
 * by the service: sample, operator, temperature, path length, pH, buffer, the volumes mixed
 * and the concentrations after mixing.
 */
import type { SampleDetails } from '../../main/bridge/contract';
import type { BenchActions } from '../benchActions';
import { h, setText } from '../elements';
import { addMessage, type ScreenState, type Store } from '../store';

export interface SamplePanel {
  element: HTMLElement;
  render(state: ScreenState): void;
}

interface ConcRow { row: HTMLElement; name: HTMLInputElement; value: HTMLInputElement; unit: HTMLInputElement }

export function createSamplePanel(store: Store, actions: BenchActions): SamplePanel {
  const sample = h('input', { type: 'text', maxlength: 200, 'aria-label': 'Sample' });
  const operator = h('input', { type: 'text', maxlength: 200, 'aria-label': 'Operator' });
  const temperature = h('input', { type: 'number', step: 0.1, min: -50, max: 200, 'aria-label': 'Temperature in °C' });
  const pathLength = h('input', { type: 'number', step: 0.01, min: 0.01, max: 100, placeholder: '1.00', 'aria-label': 'Path length in cm' });
  const pH = h('input', { type: 'number', step: 0.01, min: -2, max: 16, 'aria-label': 'pH' });
  const buffer = h('input', { type: 'text', maxlength: 200, placeholder: 'none', 'aria-label': 'Buffer' });
  const volumes = h('input', { type: 'text', maxlength: 400, placeholder: 'dye 0.30, bleach 2.70', 'aria-label': 'Volumes mixed in mL' });
  const notes = h('textarea', { rows: 2, maxlength: 1000, 'aria-label': 'Notes' });
  const concList = h('div', { class: 'conc-list' });
  const rows: ConcRow[] = [];
  const addRow = (name = '', value = '', unit = 'M'): void => {
    const r: ConcRow = {
      name: h('input', { type: 'text', maxlength: 80, placeholder: 'species', value: name, 'aria-label': 'Species' }),
      value: h('input', { type: 'number', step: 'any', min: 0, value, 'aria-label': 'Concentration' }),
      unit: h('input', { type: 'text', maxlength: 20, value: unit, class: 'unit', 'aria-label': 'Unit' }),
      row: h('div', { class: 'conc-row' }),
    };
    r.row.append(r.name, r.value, r.unit);
    rows.push(r);
    concList.append(r.row);
  };
  const more = h('button', { type: 'button', class: 'small-button' }, 'Add a concentration');
  more.addEventListener('click', () => addRow());
  const save = h('button', { type: 'button', class: 'small-button primary' }, 'Save details');
  const saved = h('span', { class: 'small' });

  save.addEventListener('click', async () => {
    const details: SampleDetails = { sample: sample.value.trim(), operator: operator.value.trim(), notes: notes.value };
    if (temperature.value.trim() === '') details.temperature_C = null;
    else {
      const t = Number(temperature.value);
      if (!Number.isFinite(t) || t < -50 || t > 200) {
        store.update((d) => addMessage(d, 'error', `Temperature: "${temperature.value}" is not a temperature between −50 and 200 °C; correct it and save again.`));
        return;
      }
      details.temperature_C = t;
    }
    const conc: NonNullable<SampleDetails['concentrations']> = [];
    for (const r of rows) {
      if (!r.name.value.trim() && !r.value.value.trim()) continue;
      const v = Number(r.value.value);
      if (!r.name.value.trim() || !Number.isFinite(v) || v < 0) {
        store.update((d) => addMessage(d, 'error', `Concentration "${r.name.value || '(no name)'}": give a species and a value of 0 or more; correct it and save again.`));
        return;
      }
      conc.push({ name: r.name.value.trim(), value: v, unit: r.unit.value.trim() });
    }
    details.concentrations = conc;
    const numberOrNull = (input: HTMLInputElement, what: string, lo: number, hi: number): number | null | undefined => {
      if (input.value.trim() === '') return null;
      const v = Number(input.value);
      if (Number.isFinite(v) && v >= lo && v <= hi) return v;
      store.update((d) => addMessage(d, 'error', `${what}: "${input.value}" is not a number from ${lo} to ${hi}; correct it and save again.`));
      return undefined;
    };
    const path = numberOrNull(pathLength, 'Path length (cm)', 0.01, 100);
    const ph = numberOrNull(pH, 'pH', -2, 16);
    if (path === undefined || ph === undefined) return;
    details.path_cm = path;
    details.pH = ph;
    details.buffer = buffer.value.trim();
    // "name value, name value" in mL: what was pipetted into the cell, as typed at the bench.
    const vols: NonNullable<SampleDetails['volumes']> = [];
    for (const part of volumes.value.split(',').map((x) => x.trim()).filter(Boolean)) {
      const m = /^(.*\S)\s+(\d+(?:\.\d+)?)\s*(?:mL)?$/i.exec(part);
      if (!m || !(Number(m[2]) > 0)) {
        store.update((d) => addMessage(d, 'error', `Volumes: "${part}" is not "what amount" in mL (for example "dye 0.30"); correct it and save again.`));
        return;
      }
      vols.push({ name: m[1]!, value_mL: Number(m[2]) });
    }
    details.volumes = vols;
    if (await actions.send({ type: 'setSampleDetails', details })) setText(saved, `Saved ${new Date().toLocaleTimeString()}`);
  });

  const field = (label: string, input: HTMLElement) => h('label', { class: 'field stacked' }, h('span', {}, label), input);
  const element = h('section', { class: 'panel sample', 'aria-label': 'Sample details' },
    h('h2', {}, 'Sample'),
    field('Sample', sample), field('Operator', operator), field('Temperature / °C', temperature),
    h('div', { class: 'field-pair' }, field('Path length / cm', pathLength), field('pH', pH)),
    field('Buffer', buffer), field('Volumes mixed / mL', volumes),
    h('p', { class: 'small' }, 'Concentrations after mixing'), concList, more,
    field('Notes', notes),
    h('div', { class: 'button-row' }, save, saved));

  let synced = false;
  return {
    element,
    render(state) {
      const d = state.bench?.sampleDetails;
      if (!d || synced) return;
      // Fill the form once from what the service holds; after that the fields are the user's.
      synced = true;
      sample.value = d.sample ?? '';
      operator.value = d.operator ?? '';
      temperature.value = d.temperature_C == null ? '' : String(d.temperature_C);
      notes.value = d.notes ?? '';
      if (d.path_cm != null) pathLength.value = String(d.path_cm);
      pH.value = d.pH == null ? '' : String(d.pH);
      buffer.value = d.buffer ?? '';
      volumes.value = (d.volumes ?? []).map((v) => `${v.name} ${v.value_mL}`).join(', ');
      for (const c of d.concentrations ?? []) addRow(c.name, String(c.value), c.unit);
      if (rows.length === 0) addRow('hypochlorite', '', 'M');
    },
  };
}
