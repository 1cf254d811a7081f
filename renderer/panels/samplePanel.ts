/**
 * Sample details, entered before or during the run and written into the run record
 * by the service: sample, operator, temperature and the concentrations after mixing.
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
    if (await actions.send({ type: 'setSampleDetails', details })) setText(saved, `Saved ${new Date().toLocaleTimeString()}`);
  });

  const field = (label: string, input: HTMLElement) => h('label', { class: 'field stacked' }, h('span', {}, label), input);
  const element = h('section', { class: 'panel sample', 'aria-label': 'Sample details' },
    h('h2', {}, 'Sample'),
    field('Sample', sample), field('Operator', operator), field('Temperature / °C', temperature),
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
      for (const c of d.concentrations ?? []) addRow(c.name, String(c.value), c.unit);
      if (rows.length === 0) addRow('hypochlorite', '', 'M');
    },
  };
}
