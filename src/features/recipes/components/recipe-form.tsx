// The recipe form: every field of `recipeSchema`, each zod issue shown beside its field by path,
// and the page geometry the recipe gives (pixels, points, TrimBox) computed as you type.
import type { ReactNode } from 'react';
import { CheckField, ChoiceField, InputField } from '../../../components/fields';
import { Button } from '../../../components/ui';
import { FORMAT_EXT, renderName } from '../../../../shared/naming';
import { TRIM_PRESETS, findPreset } from '../../../../shared/presets';
import { recipeGeometry, type Recipe, type RecipeGeometry } from '../../../../shared/recipe';

export type Issues = Record<string, string>;

/** zod-style issues (path array) or server details (dotted path) -> first message per dotted path. */
export function issuesByPath(list: ReadonlyArray<{ path: string | ReadonlyArray<PropertyKey>; message: string }>): Issues {
  const out: Issues = {};
  for (const issue of list) {
    const key = typeof issue.path === 'string' ? issue.path : issue.path.map(String).join('.');
    out[key || 'recipe'] ??= issue.message;
  }
  return out;
}

const LABELS: Record<string, string> = {
  name: 'Name',
  trim: 'Trim',
  'trim.width': 'Trim width',
  'trim.height': 'Trim height',
  'bleed.size': 'Bleed',
  'safe.size': 'Safe margin',
  dpi: 'DPI',
  'fill.color': 'Fill colour',
  naming: 'Naming template',
  'back.art': 'Back art',
  'sheet.multiple': 'Sheet multiple',
  'sheet.pad': 'Padding',
};

export function labelFor(path: string): string {
  if (LABELS[path]) return LABELS[path];
  const rule = /^turnRules\.(\d+)\.(\w+)$/.exec(path);
  if (rule) return `Turn rule ${Number(rule[1]) + 1} ${rule[2]}`;
  return path;
}

const num = (value: number) => (Number.isNaN(value) ? '' : value);
const readNum = (e: { target: HTMLInputElement }) => e.target.valueAsNumber;

const SAMPLE_SOURCE = 'cb-01-ferry-runner';

export function RecipeForm({
  value,
  onChange,
  issues,
  readOnly,
}: {
  value: Recipe;
  onChange: (next: Recipe) => void;
  issues: Issues;
  readOnly: boolean;
}) {
  const set = <K extends keyof Recipe>(key: K, v: Recipe[K]) => onChange({ ...value, [key]: v });
  const err = (path: string) => issues[path];
  const custom = typeof value.trim === 'object';
  const presetName = typeof value.trim === 'string' ? value.trim : 'custom';

  const chooseTrim = (choice: string) => {
    if (choice !== 'custom') return set('trim', choice as Recipe['trim']);
    // Start the custom size from the preset that was chosen, so the numbers are a sensible edit.
    const from = typeof value.trim === 'string' ? findPreset(value.trim) : undefined;
    set('trim', { width: from?.width ?? 63.5, height: from?.height ?? 88.9, unit: 'mm' });
  };

  const exampleName = (() => {
    try {
      const ext = FORMAT_EXT[value.outputs.singles ?? 'png'];
      return renderName(value.naming, { name: SAMPLE_SOURCE, seq: 7, copy: 1, folder: '', ext });
    } catch {
      return null;
    }
  })();

  return (
    <fieldset disabled={readOnly} className="space-y-8 disabled:opacity-90">
      <Section title="Name">
        <InputField label="Name" value={value.name} error={err('name')} onChange={(e) => set('name', e.target.value)} maxLength={200} />
      </Section>

      <Section title="Size">
        <div className="grid gap-4 sm:grid-cols-2">
          <ChoiceField label="Trim size" value={presetName} error={err('trim')} onChange={(e) => chooseTrim(e.target.value)}>
            {TRIM_PRESETS.map((p) => (
              <option key={p.name} value={p.name}>
                {p.label}
              </option>
            ))}
            <option value="custom">Custom size…</option>
          </ChoiceField>
          <InputField label="DPI" type="number" min={72} max={1200} step={1} value={num(value.dpi)} error={err('dpi')} onChange={(e) => set('dpi', readNum(e))} hint="300 is the norm for print." />
        </div>
        {custom && typeof value.trim === 'object' && (
          <div className="mt-4 grid gap-4 sm:grid-cols-3">
            <InputField label="Trim width" type="number" step="any" min={0} value={num(value.trim.width)} error={err('trim.width')} onChange={(e) => set('trim', { ...(value.trim as Exclude<Recipe['trim'], string>), width: readNum(e) })} />
            <InputField label="Trim height" type="number" step="any" min={0} value={num(value.trim.height)} error={err('trim.height')} onChange={(e) => set('trim', { ...(value.trim as Exclude<Recipe['trim'], string>), height: readNum(e) })} />
            <ChoiceField label="Trim unit" value={value.trim.unit} error={err('trim.unit')} onChange={(e) => set('trim', { ...(value.trim as Exclude<Recipe['trim'], string>), unit: e.target.value as 'mm' | 'in' })}>
              <option value="mm">mm</option>
              <option value="in">in</option>
            </ChoiceField>
          </div>
        )}
        <div className="mt-4 grid gap-4 sm:grid-cols-2">
          <LengthField label="Bleed" hint="On each side; cut away. 1/8 in or 3 mm is usual." value={value.bleed} error={err('bleed.size') ?? err('bleed')} onChange={(v) => set('bleed', v)} />
          <LengthField label="Safe margin" hint="Inside the trim; holds nothing important." value={value.safe} error={err('safe.size') ?? err('safe')} onChange={(v) => set('safe', v)} />
        </div>
      </Section>

      <Section title="Art">
        <div className="grid gap-4 sm:grid-cols-2">
          <ChoiceField label="Source art" value={value.source} error={err('source')} onChange={(e) => set('source', e.target.value as Recipe['source'])}>
            <option value="auto">auto — decide per card from its proportions</option>
            <option value="trim">trim — art is the finished size, bleed is made</option>
            <option value="bleed">bleed — art already includes bleed</option>
          </ChoiceField>
          <ChoiceField label="Fit" value={value.fit} error={err('fit')} onChange={(e) => set('fit', e.target.value as Recipe['fit'])}>
            <option value="cover">cover — crop to fill the card</option>
            <option value="contain">contain — pad with the fill</option>
            <option value="stretch">stretch</option>
          </ChoiceField>
          <ChoiceField
            label="Bleed fill"
            value={value.fill.mode}
            error={err('fill') ?? err('fill.mode')}
            onChange={(e) => {
              const mode = e.target.value as Recipe['fill']['mode'];
              set('fill', mode === 'solid' ? { mode, color: value.fill.mode === 'solid' ? value.fill.color : '#ffffff' } : { mode });
            }}
          >
            <option value="auto">auto — solid when the edge is one colour, else mirror</option>
            <option value="solid">solid colour</option>
            <option value="edge">edge — repeat the edge pixels</option>
            <option value="mirror">mirror the edge</option>
          </ChoiceField>
          {value.fill.mode === 'solid' && (
            <div className="grid grid-cols-[auto_1fr] items-start gap-3">
              <InputField label="Fill colour" type="color" className="h-10 w-14 cursor-pointer rounded border border-line bg-white p-1" value={/^#[0-9a-f]{6}$/i.test(value.fill.color) ? value.fill.color : '#ffffff'} onChange={(e) => set('fill', { mode: 'solid', color: e.target.value })} />
              <InputField label="Fill colour (hex)" value={value.fill.color} error={err('fill.color')} onChange={(e) => set('fill', { mode: 'solid', color: e.target.value })} />
            </div>
          )}
        </div>
      </Section>

      <Section title="Turn">
        <ChoiceField label="Landscape art" value={value.turn} error={err('turn')} onChange={(e) => set('turn', e.target.value as Recipe['turn'])}>
          <option value="clockwise">turn clockwise to portrait</option>
          <option value="counterclockwise">turn counterclockwise to portrait</option>
          <option value="keep">keep as it is</option>
        </ChoiceField>
        <div className="mt-4">
          <p className="text-sm font-medium">Turn rules</p>
          <p className="text-xs text-ink-soft">A file pattern (glob, e.g. <code className="font-mono">tokens/*.png</code>) and how matching art is turned; the first match wins.</p>
          {err('turnRules') && <p className="text-xs font-medium text-cut-deep">{err('turnRules')}</p>}
          <ul className="mt-2 space-y-2">
            {value.turnRules.map((rule, i) => (
              <li key={i} className="grid grid-cols-[1fr_1fr_auto] items-end gap-3">
                <InputField label={`Rule ${i + 1} pattern`} value={rule.match} error={err(`turnRules.${i}.match`)} onChange={(e) => set('turnRules', value.turnRules.map((r, j) => (j === i ? { ...r, match: e.target.value } : r)))} />
                <ChoiceField label={`Rule ${i + 1} turn`} value={rule.turn} error={err(`turnRules.${i}.turn`)} onChange={(e) => set('turnRules', value.turnRules.map((r, j) => (j === i ? { ...r, turn: e.target.value as Recipe['turn'] } : r)))}>
                  <option value="clockwise">clockwise</option>
                  <option value="counterclockwise">counterclockwise</option>
                  <option value="keep">keep</option>
                </ChoiceField>
                <Button type="button" tone="danger" className="mb-0.5 px-3 py-2" aria-label={`Remove rule ${i + 1}`} onClick={() => set('turnRules', value.turnRules.filter((_, j) => j !== i))}>
                  Remove
                </Button>
              </li>
            ))}
          </ul>
          <Button type="button" tone="quiet" className="mt-3 px-3 py-1" onClick={() => set('turnRules', [...value.turnRules, { match: '', turn: 'keep' }])}>
            Add a turn rule
          </Button>
        </div>
      </Section>

      <Section title="Names and order">
        <div className="grid gap-4 sm:grid-cols-2">
          <InputField
            label="Naming template"
            value={value.naming}
            error={err('naming')}
            onChange={(e) => set('naming', e.target.value)}
            hint={
              <>
                Tokens: <code className="font-mono">{'{name}'}</code> source file name, <code className="font-mono">{'{seq}'}</code> /{' '}
                <code className="font-mono">{'{seq:3}'}</code> deck position (zero-padded), <code className="font-mono">{'{copy}'}</code>,{' '}
                <code className="font-mono">{'{folder}'}</code>, <code className="font-mono">{'{ext}'}</code>.
              </>
            }
          />
          <ChoiceField label="Order" value={value.order} error={err('order')} onChange={(e) => set('order', e.target.value as Recipe['order'])}>
            <option value="natural">natural sort of file paths</option>
            <option value="manifest">as listed in manifest.csv</option>
          </ChoiceField>
        </div>
        {exampleName && !err('naming') && (
          <p className="mt-2 text-sm text-ink-soft" aria-live="polite">
            Card 7 from <code className="font-mono">{SAMPLE_SOURCE}.png</code> becomes <code className="rounded bg-paper-deep px-1 font-mono text-ink" data-testid="example-name">{exampleName}</code>
          </p>
        )}
      </Section>

      <Section title="Back and padding">
        <div className="grid gap-4 sm:grid-cols-2">
          <InputField label="Back art file" placeholder="none (e.g. back.png)" value={value.back.art ?? ''} error={err('back.art')} onChange={(e) => set('back', { ...value.back, art: e.target.value.trim() === '' ? null : e.target.value })} hint="A file in the art set, or empty for no back." />
          <ChoiceField label="Back placement" value={value.back.placement} error={err('back.placement')} onChange={(e) => set('back', { ...value.back, placement: e.target.value as Recipe['back']['placement'] })}>
            <option value="none">none</option>
            <option value="last">last page</option>
            <option value="first">first page</option>
            <option value="interleaved">after each front (per-card backs from manifest.csv)</option>
          </ChoiceField>
          <InputField label="Sheet multiple" type="number" min={1} max={1000} step={1} value={num(value.sheet.multiple)} error={err('sheet.multiple')} onChange={(e) => set('sheet', { ...value.sheet, multiple: readNum(e) })} hint="Cards per press sheet; 18 is common for poker size." />
          <ChoiceField label="Pad the deck" value={value.sheet.pad} error={err('sheet.pad')} onChange={(e) => set('sheet', { ...value.sheet, pad: e.target.value as Recipe['sheet']['pad'] })}>
            <option value="none">no padding</option>
            <option value="blank">blank cards</option>
            <option value="back">backs</option>
            <option value="repeat">repeat cards from the start</option>
          </ChoiceField>
        </div>
      </Section>

      <Section title="Outputs">
        <div className="grid gap-4 sm:grid-cols-2">
          <ChoiceField label="Single card files" value={value.outputs.singles ?? 'none'} error={err('outputs.singles')} onChange={(e) => set('outputs', { ...value.outputs, singles: e.target.value === 'none' ? null : (e.target.value as 'png' | 'tiff' | 'jpeg') })}>
            <option value="png">PNG</option>
            <option value="tiff">TIFF</option>
            <option value="jpeg">JPEG</option>
            <option value="none">none</option>
          </ChoiceField>
          <ChoiceField label="Home-print sheets" value={value.outputs.sheets?.paper ?? 'none'} error={err('outputs.sheets')} onChange={(e) => set('outputs', { ...value.outputs, sheets: e.target.value === 'none' ? null : { paper: e.target.value as 'letter' | 'a4', marks: value.outputs.sheets?.marks ?? true } })}>
            <option value="none">none</option>
            <option value="letter">Letter</option>
            <option value="a4">A4</option>
          </ChoiceField>
        </div>
        <div className="mt-4 flex flex-wrap gap-6">
          <CheckField label="Combined PDF" checked={value.outputs.pdf} onChange={(e) => set('outputs', { ...value.outputs, pdf: e.target.checked })} />
          {value.outputs.sheets && <CheckField label="Crop marks on sheets" checked={value.outputs.sheets.marks} onChange={(e) => set('outputs', { ...value.outputs, sheets: { paper: value.outputs.sheets!.paper, marks: e.target.checked } })} />}
          <CheckField label="Proof sheet" checked={value.outputs.proof} onChange={(e) => set('outputs', { ...value.outputs, proof: e.target.checked })} />
        </div>
      </Section>
    </fieldset>
  );
}

function Section({ title, children }: { title: string; children: ReactNode }) {
  return (
    <div>
      <h3 className="mb-3 font-mono text-xs font-medium uppercase tracking-[0.2em] text-ink-soft">{title}</h3>
      {children}
    </div>
  );
}

function LengthField({ label, hint, value, error, onChange }: { label: string; hint: string; value: Recipe['bleed']; error?: string; onChange: (v: Recipe['bleed']) => void }) {
  return (
    <div className="grid grid-cols-[1fr_6rem] items-start gap-2">
      <InputField label={label} type="number" step="any" min={0} value={num(value.size)} error={error} hint={hint} onChange={(e) => onChange({ ...value, size: readNum(e) })} />
      <ChoiceField label={`${label} unit`} value={value.unit} onChange={(e) => onChange({ ...value, unit: e.target.value as 'mm' | 'in' })}>
        <option value="in">in</option>
        <option value="mm">mm</option>
      </ChoiceField>
    </div>
  );
}

/** The page the recipe makes: what the printer and the PDF will see. Shown whatever other fields say. */
export function GeometryPanel({ recipe, sizeIssue }: { recipe: Recipe; sizeIssue: boolean }) {
  let g: RecipeGeometry | null = null;
  try {
    g = sizeIssue ? null : recipeGeometry(recipe);
  } catch {
    g = null;
  }
  if (!g || ![g.pagePx.w, g.pagePx.h, g.pagePt.w, g.pagePt.h, g.bleedPx].every(Number.isFinite)) {
    return <p className="text-sm text-ink-soft">Fix the size fields (trim, bleed, safe margin, DPI) to see the page size.</p>;
  }
  const rows: Array<[string, string]> = [
    ['Page (trim + bleed)', `${g.pagePx.w} x ${g.pagePx.h} px`],
    ['Trim', `${g.trimPx.w} x ${g.trimPx.h} px`],
    ['Bleed per side', `${g.bleedPx} px · ${g.bleedPt} pt`],
    ['Safe margin', `${g.safePx} px`],
    ['PDF page (MediaBox)', `${g.pagePt.w} x ${g.pagePt.h} pt`],
    ['TrimBox', g.trimBoxPt.join(' ')],
  ];
  return (
    <dl className="grid grid-cols-[auto_1fr] gap-x-4 gap-y-1.5 text-sm" data-testid="geometry">
      {rows.map(([k, v]) => (
        <div key={k} className="contents">
          <dt className="text-ink-soft">{k}</dt>
          <dd className="font-mono text-ink">{v}</dd>
        </div>
      ))}
    </dl>
  );
}
