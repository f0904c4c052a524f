// A standalone page to try sizes before making a recipe: the same drawing the recipe editor shows,
// driven by a small form whose lengths can be typed in millimetres or inches.
import { useState } from 'react';
import { Link } from 'react-router-dom';
import { ChoiceField, InputField } from '../../../components/fields';
import { PageHeader, Panel } from '../../../components/ui';
import { TRIM_PRESETS, findPreset } from '../../../../shared/presets';
import type { LengthUnit } from '../../../../shared/units';
import type { Recipe } from '../../../../shared/recipe';
import { RecipePreview } from './recipe-preview';
import { convertLength } from './preview-geometry';

type Form = {
  trim: Recipe['trim'];
  bleed: number;
  safe: number;
  unit: LengthUnit;
  fill: Recipe['fill'];
  turn: Recipe['turn'];
};

const START: Form = { trim: 'poker', bleed: 0.125, safe: 0.125, unit: 'in', fill: { mode: 'auto' }, turn: 'clockwise' };

export function RecipePreviewPage() {
  const [form, setForm] = useState<Form>(START);
  const set = (patch: Partial<Form>) => setForm((f) => ({ ...f, ...patch }));
  const custom = typeof form.trim === 'object' ? form.trim : null;

  const changeUnit = (unit: LengthUnit) =>
    setForm((f) => ({
      ...f,
      unit,
      bleed: convertLength(f.bleed, f.unit, unit),
      safe: convertLength(f.safe, f.unit, unit),
      trim: typeof f.trim === 'object' ? { width: convertLength(f.trim.width, f.trim.unit, unit), height: convertLength(f.trim.height, f.trim.unit, unit), unit } : f.trim,
    }));

  const chooseTrim = (name: string) => {
    if (name !== 'custom') return set({ trim: name as Recipe['trim'] });
    const from = typeof form.trim === 'string' ? findPreset(form.trim) : undefined;
    const w = from?.width ?? 63.5;
    const h = from?.height ?? 88.9;
    set({ trim: { width: convertLength(w, 'mm', form.unit), height: convertLength(h, 'mm', form.unit), unit: form.unit } });
  };

  const settings = {
    trim: form.trim,
    bleed: { size: form.bleed, unit: form.unit },
    safe: { size: form.safe, unit: form.unit },
    fill: form.fill,
    turn: form.turn,
  };

  return (
    <>
      <PageHeader eyebrow="Recipes" title="Card preview">
        <Link to="../recipes/new" relative="path" className="text-sm font-semibold text-cut underline-offset-4 hover:underline">
          Make a recipe
        </Link>
      </PageHeader>
      <p className="mb-6 max-w-2xl text-ink-soft">
        See a card as it will be cut before you make a recipe: the bleed that is trimmed away, the cut line and the safe margin,
        drawn to scale. The recipe editor shows the same drawing.
      </p>
      <div className="grid items-start gap-8 lg:grid-cols-[22rem_1fr]">
        <Panel title="Sizes">
          <div className="space-y-4">
            <ChoiceField label="Trim size" value={custom ? 'custom' : (form.trim as string)} onChange={(e) => chooseTrim(e.target.value)}>
              {TRIM_PRESETS.map((p) => (
                <option key={p.name} value={p.name}>
                  {p.label}
                </option>
              ))}
              <option value="custom">Custom size…</option>
            </ChoiceField>
            <ChoiceField label="Units" value={form.unit} onChange={(e) => changeUnit(e.target.value as LengthUnit)}>
              <option value="in">inches</option>
              <option value="mm">millimetres</option>
            </ChoiceField>
            {custom && (
              <div className="grid grid-cols-2 gap-3">
                <InputField label={`Trim width (${form.unit})`} type="number" step="any" min={0} value={Number.isNaN(custom.width) ? '' : custom.width} onChange={(e) => set({ trim: { ...custom, width: e.target.valueAsNumber } })} />
                <InputField label={`Trim height (${form.unit})`} type="number" step="any" min={0} value={Number.isNaN(custom.height) ? '' : custom.height} onChange={(e) => set({ trim: { ...custom, height: e.target.valueAsNumber } })} />
              </div>
            )}
            <div className="grid grid-cols-2 gap-3">
              <InputField label={`Bleed (${form.unit})`} type="number" step="any" min={0} value={Number.isNaN(form.bleed) ? '' : form.bleed} onChange={(e) => set({ bleed: e.target.valueAsNumber })} />
              <InputField label={`Safe margin (${form.unit})`} type="number" step="any" min={0} value={Number.isNaN(form.safe) ? '' : form.safe} onChange={(e) => set({ safe: e.target.valueAsNumber })} />
            </div>
            <ChoiceField
              label="Bleed fill"
              value={form.fill.mode}
              onChange={(e) => {
                const mode = e.target.value as Recipe['fill']['mode'];
                set({ fill: mode === 'solid' ? { mode, color: '#2e1f3f' } : { mode } });
              }}
            >
              <option value="auto">auto</option>
              <option value="solid">solid colour</option>
              <option value="edge">edge pixels repeated</option>
              <option value="mirror">mirror the edge</option>
            </ChoiceField>
            {form.fill.mode === 'solid' && (
              <InputField label="Fill colour" type="color" className="h-10 w-16 rounded border border-line bg-white p-1" value={form.fill.color} onChange={(e) => set({ fill: { mode: 'solid', color: e.target.value } })} />
            )}
            <ChoiceField label="Landscape art" value={form.turn} onChange={(e) => set({ turn: e.target.value as Recipe['turn'] })}>
              <option value="clockwise">turn clockwise</option>
              <option value="counterclockwise">turn counterclockwise</option>
              <option value="keep">keep landscape</option>
            </ChoiceField>
          </div>
        </Panel>
        <Panel title="As it will be cut">
          <RecipePreview settings={settings} unit={form.unit} />
        </Panel>
      </div>
    </>
  );
}
