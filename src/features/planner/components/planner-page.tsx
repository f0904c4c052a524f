// The print planner: pick a sheet multiple and a number of sets, see cards, padding and blank slots
// with ideas to fill them, and, with a price sheet, the cost per set and in total and the cheapest
// deck size that holds the deck. From a run the card count comes from its deck; else it is typed.
import { useMemo, useState } from 'react';
import { Link, useParams } from 'react-router-dom';
import { ChoiceField, InputField } from '../../../components/fields';
import { ErrorNote, Loading, PageHeader, Panel } from '../../../components/ui';
import { plural } from '../../../components/format';
import { planPrint, type PlannedFront, type PrintPlan } from '../../../../shared/planner';
import { priceTermsOf, type PriceSheet } from '../../../../shared/api/price-sheets';
import { usePriceSheets } from '../../price-sheets/api/get-price-sheets';
import { formatMoney } from '../../price-sheets/components/format-money';
import { copiesOf, useRunDeck } from '../../deck/api/use-run-deck';

const COMMON_MULTIPLES = [1, 9, 18, 36, 54, 55];

export function PlannerPage() {
  const { workspaceId = '', runId } = useParams();
  if (runId) return <RunPlanner workspaceId={workspaceId} runId={runId} />;
  return <Planner workspaceId={workspaceId} source={null} />;
}

function RunPlanner({ workspaceId, runId }: { workspaceId: string; runId: string }) {
  const { deck, isPending, error } = useRunDeck(workspaceId, runId);
  if (error) return <ErrorNote error={error} />;
  if (isPending || !deck) return <Loading what="the run" />;
  const fronts = deck.cards.filter((c) => c.role === 'front' && c.state === 'done').map((c) => ({ source: c.source, copies: copiesOf(c) }));
  return (
    <Planner
      workspaceId={workspaceId}
      source={{ title: `${deck.run.recipe.name} on ${deck.run.artSet.name}`, fronts, multiple: deck.settings.sheet.multiple }}
    />
  );
}

type Source = { title: string; fronts: PlannedFront[]; multiple: number } | null;

function Planner({ workspaceId, source }: { workspaceId: string; source: Source }) {
  const sheets = usePriceSheets(workspaceId);
  const runFaces = source ? source.fronts.reduce((n, f) => n + f.copies, 0) : null;
  const [typedFaces, setTypedFaces] = useState(50);
  const [multiple, setMultiple] = useState(source?.multiple ?? 18);
  const [typingMultiple, setTypingMultiple] = useState(false);
  const [sets, setSets] = useState(1);
  const [sheetId, setSheetId] = useState<string>('');
  const [stock, setStock] = useState<string>('');

  // The recipe's own multiple is always one of the choices.
  const multiples = [...new Set([...COMMON_MULTIPLES, ...(source ? [source.multiple] : [])])].sort((a, b) => a - b);
  const otherMultiple = typingMultiple || !multiples.includes(multiple);
  const chosen: PriceSheet | null = sheets.data?.find((s) => s.id === sheetId) ?? (sheetId === '' ? (sheets.data?.[0] ?? null) : null);
  const faces = runFaces ?? typedFaces;
  const valid = Number.isFinite(faces) && faces >= 0 && Number.isFinite(multiple) && multiple >= 1 && Number.isFinite(sets) && sets >= 1;
  const plan = useMemo(
    () =>
      valid
        ? planPrint({ faces, sheetMultiple: multiple, sets, priceSheet: chosen ? priceTermsOf(chosen) : null, stock: stock || null, fronts: source?.fronts })
        : null,
    [valid, faces, multiple, sets, chosen, stock, source],
  );

  return (
    <>
      <PageHeader eyebrow={source ? 'Run · print planner' : 'Planning'} title={source ? source.title : 'Print planner'}>
        <nav aria-label="Planner links" className="flex gap-4 text-sm font-semibold">
          {source && (
            <>
              <Link to=".." relative="path" className="text-cut underline-offset-4 hover:underline">
                Run
              </Link>
              <Link to="../deck" relative="path" className="text-cut underline-offset-4 hover:underline">
                Deck by sheets
              </Link>
            </>
          )}
          <Link to={`/w/${workspaceId}/price-sheets`} className="text-cut underline-offset-4 hover:underline">
            Price sheets
          </Link>
        </nav>
      </PageHeader>
      <div className="grid items-start gap-8 lg:grid-cols-[20rem_1fr]">
        <Panel title="Order">
          <div className="space-y-4">
            {runFaces !== null ? (
              <p className="text-sm">
                This run’s deck has <strong data-testid="plan-run-faces">{plural(runFaces, 'card face')}</strong> ({plural(source!.fronts.length, 'different card')}).
              </p>
            ) : (
              <InputField label="Cards in one set" type="number" min={0} step={1} value={Number.isNaN(typedFaces) ? '' : typedFaces} onChange={(e) => setTypedFaces(e.target.valueAsNumber)} hint="Every copy of every card face; a back printed on all cards is not counted." />
            )}
            <ChoiceField label="Sheet multiple" value={otherMultiple ? 'other' : String(multiple)}
              onChange={(e) => {
                setTypingMultiple(e.target.value === 'other');
                if (e.target.value !== 'other') setMultiple(Number(e.target.value));
              }}
            >
              {multiples.map((m) => (
                <option key={m} value={m}>
                  {m === 1 ? 'no sheets (1)' : `${m} cards a sheet`}
                  {source && m === source.multiple ? ' (recipe)' : ''}
                </option>
              ))}
              <option value="other">other…</option>
            </ChoiceField>
            {otherMultiple && (
              <InputField label="Cards a sheet" type="number" min={1} step={1} value={Number.isNaN(multiple) ? '' : multiple} onChange={(e) => setMultiple(e.target.valueAsNumber)} />
            )}
            <InputField label="Number of sets" type="number" min={1} step={1} value={Number.isNaN(sets) ? '' : sets} onChange={(e) => setSets(e.target.valueAsNumber)} />
            {sheets.isPending ? (
              <Loading what="price sheets" />
            ) : sheets.data && sheets.data.length > 0 ? (
              <>
                <ChoiceField label="Price sheet" value={chosen?.id ?? 'none'} onChange={(e) => { setSheetId(e.target.value); setStock(''); }}>
                  {sheets.data.map((s) => (
                    <option key={s.id} value={s.id}>
                      {s.name}
                    </option>
                  ))}
                  <option value="none">none (no prices)</option>
                </ChoiceField>
                {chosen && chosen.stocks.length > 0 && (
                  <ChoiceField label="Card stock" value={stock} onChange={(e) => setStock(e.target.value)}>
                    <option value="">no surcharge</option>
                    {chosen.stocks.map((s) => (
                      <option key={s.name} value={s.name}>
                        {s.name} (+{formatMoney(s.surchargePerSet, chosen.currency)} a set)
                      </option>
                    ))}
                  </ChoiceField>
                )}
              </>
            ) : (
              <p className="text-sm text-ink-soft">
                No price sheet yet. <Link to={`/w/${workspaceId}/price-sheets`} className="font-semibold text-cut underline-offset-4 hover:underline">Enter your printer’s prices</Link> to see costs.
              </p>
            )}
          </div>
        </Panel>
        {plan ? <PlanResult plan={plan} currency={chosen?.currency ?? 'USD'} /> : <Panel><p className="text-sm text-ink-soft">Enter whole numbers: cards 0 or more, sheet multiple and sets 1 or more.</p></Panel>}
      </div>
    </>
  );
}

function PlanResult({ plan, currency }: { plan: PrintPlan; currency: string }) {
  const money = (n: number) => formatMoney(n, currency);
  const p = plan.pricing;
  return (
    <div className="space-y-8" aria-live="polite">
      <Panel title="Deck">
        <dl className="grid grid-cols-2 gap-4 sm:grid-cols-4" data-testid="plan-deck">
          <Stat label="Cards" value={plan.faces} testId="plan-cards" />
          <Stat label="Padded to" value={plan.paddedSize} testId="plan-padded" />
          <Stat label="Blank slots" value={plan.blankSlots} testId="plan-blank" />
          <Stat label="Press sheets a set" value={plan.sheetsPerSet} testId="plan-sheets" />
        </dl>
        <SheetStrip plan={plan} />
        <p className="mt-3 text-sm text-ink-soft">
          {plan.sets} {plan.sets === 1 ? 'set' : 'sets'} = {plural(plan.totalCards, 'card')} printed.
        </p>
      </Panel>
      {p && (
        <Panel title="Price">
          {p.tier ? (
            <>
              <dl className="grid grid-cols-2 gap-4 sm:grid-cols-3">
                <Stat label="Per set" value={money(p.costPerSet)} testId="plan-cost-per-set" />
                <Stat label="Total" value={money(p.total)} testId="plan-total" />
                <Stat label="Deck size" value={`up to ${p.tier.maxCards}`} testId="plan-tier" />
              </dl>
              <p className="mt-3 text-sm" data-testid="plan-setup">
                {p.setupWaived
                  ? `Setup fee (${money(p.setupFee)}) waived for ${plan.sets} sets.`
                  : p.setsToWaiveSetup > 0
                    ? `Setup fee ${money(p.setupFee)} included; ${plural(p.setsToWaiveSetup, 'more set')} would waive it.`
                    : `Setup fee ${money(p.setupFee)} included.`}
                {p.stock && p.stock.surchargePerSet > 0 ? ` ${p.stock.name} stock adds ${money(p.stock.surchargePerSet)} a set.` : ''}
              </p>
            </>
          ) : (
            <p role="alert" className="text-sm text-cut-deep">
              No deck size on this price sheet holds {plural(plan.paddedSize, 'card')}.
            </p>
          )}
          <table className="mt-4 w-full text-left text-sm" data-testid="plan-tiers">
            <caption className="sr-only">Every deck size on the price sheet</caption>
            <thead className="text-ink-soft">
              <tr>
                <th className="pb-1 font-medium">Deck size</th>
                <th className="pb-1 text-right font-medium">Per set</th>
                <th className="pb-1 text-right font-medium">Order total</th>
                <th className="pb-1 font-medium">
                  <span className="sr-only">Note</span>
                </th>
              </tr>
            </thead>
            <tbody>
              {p.quotes.map((q) => {
                const cheapest = p.tier !== null && q.tier === p.tier;
                return (
                  <tr key={q.tier.maxCards} className={`border-t border-line/60 ${q.holds ? '' : 'text-ink-soft/60'} ${cheapest ? 'bg-proof-soft font-semibold' : ''}`} data-cheapest={cheapest || undefined}>
                    <td className="py-1.5 pl-1">up to {q.tier.maxCards} cards</td>
                    <td className="py-1.5 text-right font-mono">{money(q.pricePerSet)}</td>
                    <td className="py-1.5 text-right font-mono">{money(q.total)}</td>
                    <td className="py-1.5 pl-3 text-xs">{cheapest ? 'cheapest that holds the deck' : q.holds ? '' : 'too small'}</td>
                  </tr>
                );
              })}
            </tbody>
          </table>
        </Panel>
      )}
      <Panel title="Filling blank slots">
        {plan.suggestions.length === 0 ? (
          <p className="text-sm text-ink-soft">No blank slots: the deck fills its sheets exactly.</p>
        ) : (
          <ul className="list-inside list-disc space-y-1.5 text-sm" data-testid="plan-suggestions">
            {plan.suggestions.map((s) => (
              <li key={s.kind}>{s.text}</li>
            ))}
          </ul>
        )}
      </Panel>
    </div>
  );
}

function Stat({ label, value, testId }: { label: string; value: string | number; testId: string }) {
  return (
    <div>
      <dt className="text-sm text-ink-soft">{label}</dt>
      <dd className="text-2xl font-bold" data-testid={testId}>
        {value}
      </dd>
    </div>
  );
}

/** One bar per press sheet of a set: cards filled, blank slots hatched. */
function SheetStrip({ plan }: { plan: PrintPlan }) {
  if (plan.paddedSize === 0 || plan.sheetMultiple <= 1 || plan.sheetsPerSet > 40) return null;
  const bars = Array.from({ length: plan.sheetsPerSet }, (_, i) => {
    const filled = Math.min(plan.sheetMultiple, Math.max(0, plan.faces - i * plan.sheetMultiple));
    return filled;
  });
  return (
    <div className="mt-4 flex flex-wrap gap-2" role="img" aria-label={`${plan.sheetsPerSet} press sheets of ${plan.sheetMultiple}; the last has ${plan.blankSlots} blank slots`}>
      {bars.map((filled, i) => (
        <div key={i} className="w-24">
          <div className="flex h-3 overflow-hidden rounded-sm ring-1 ring-line">
            <div className="bg-plum" style={{ width: `${(filled / plan.sheetMultiple) * 100}%` }} />
            <div className="flex-1 bg-[repeating-linear-gradient(45deg,#f6f1e7_0_3px,#d9512c55_3px_6px)]" />
          </div>
          <p className="mt-0.5 font-mono text-[10px] text-ink-soft">sheet {i + 1}: {filled}/{plan.sheetMultiple}</p>
        </div>
      ))}
    </div>
  );
}
