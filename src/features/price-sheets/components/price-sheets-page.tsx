// Price sheets the workspace keeps: members copy deck size tiers, the setup fee and stock options from
// their printer's price list so the planner can price an order. Helpers read; owners and makers edit.
import { useState, type FormEvent } from 'react';
import { Link, useParams } from 'react-router-dom';
import { ChoiceField, InputField } from '../../../components/fields';
import { Button, ErrorNote, Loading, PageHeader, Panel } from '../../../components/ui';
import { ApiError } from '../../../lib/api';
import { priceSheetBodySchema, type PriceSheet, type PriceSheetSettings } from '../../../../shared/api/price-sheets';
import { useCanWrite } from '../../runs/components/use-can-write';
import { useDeletePriceSheet } from '../api/delete-price-sheet';
import { usePriceSheets } from '../api/get-price-sheets';
import { useSavePriceSheet } from '../api/save-price-sheet';
import { formatMoney } from './format-money';

type Issues = Record<string, string>;

const CURRENCIES = ['USD', 'EUR', 'GBP', 'CAD', 'AUD', 'CHF', 'SEK', 'NOK', 'DKK', 'PLN', 'JPY', 'NZD'];

/** A blank sheet to start from: sizes in steps of 18 (common practice for poker cards), no prices yet. */
function blankSheet(): PriceSheetSettings {
  return {
    name: '',
    currency: 'USD',
    tiers: [
      { maxCards: 18, pricePerSet: NaN },
      { maxCards: 54, pricePerSet: NaN },
      { maxCards: 108, pricePerSet: NaN },
    ],
    setupFee: 0,
    setupWaivedAtSets: null,
    stocks: [],
  };
}

export function PriceSheetsPage() {
  const { workspaceId = '' } = useParams();
  const sheets = usePriceSheets(workspaceId);
  const canWrite = useCanWrite(workspaceId);
  const [editing, setEditing] = useState<PriceSheet | 'new' | null>(null);

  return (
    <>
      <PageHeader eyebrow="Planning" title="Price sheets">
        <div className="flex items-center gap-4">
          <Link to="../plan" relative="path" className="text-sm font-semibold text-cut underline-offset-4 hover:underline">
            Print planner
          </Link>
          {canWrite && editing === null && <Button onClick={() => setEditing('new')}>New price sheet</Button>}
        </div>
      </PageHeader>
      <p className="mb-6 max-w-2xl text-ink-soft">
        Copy your printer’s prices here: what a deck of each size costs per set, the setup fee and from how many sets it is
        waived, and any card stock surcharges. Enter your own figures; nothing here comes from a real printer.
      </p>
      <div className="grid items-start gap-8 xl:grid-cols-[1fr_1fr]">
        <div className="space-y-6">
          {sheets.isPending ? (
            <Loading what="price sheets" />
          ) : sheets.error ? (
            <ErrorNote error={sheets.error} />
          ) : sheets.data.length === 0 ? (
            <Panel>
              <p className="text-sm text-ink-soft">No price sheets yet.{canWrite ? ' Make one to price your orders in the planner.' : ''}</p>
            </Panel>
          ) : (
            sheets.data.map((s) => <SheetCard key={s.id} sheet={s} canWrite={canWrite} onEdit={() => setEditing(s)} />)
          )}
        </div>
        {editing !== null && (
          <SheetForm
            key={editing === 'new' ? 'new' : editing.id}
            workspaceId={workspaceId}
            sheet={editing === 'new' ? null : editing}
            onDone={() => setEditing(null)}
          />
        )}
      </div>
    </>
  );
}

function SheetCard({ sheet, canWrite, onEdit }: { sheet: PriceSheet; canWrite: boolean; onEdit: () => void }) {
  const { workspaceId = '' } = useParams();
  const remove = useDeletePriceSheet(workspaceId);
  const money = (n: number) => formatMoney(n, sheet.currency);
  return (
    <Panel title={sheet.name}>
      <table className="w-full text-left text-sm">
        <caption className="sr-only">Deck sizes of {sheet.name}</caption>
        <thead className="text-ink-soft">
          <tr>
            <th className="pb-1 font-medium">Deck size</th>
            <th className="pb-1 text-right font-medium">Per set</th>
          </tr>
        </thead>
        <tbody>
          {[...sheet.tiers]
            .sort((a, b) => a.maxCards - b.maxCards)
            .map((t) => (
              <tr key={t.maxCards} className="border-t border-line/60">
                <td className="py-1">up to {t.maxCards} cards</td>
                <td className="py-1 text-right font-mono">{money(t.pricePerSet)}</td>
              </tr>
            ))}
        </tbody>
      </table>
      <p className="mt-3 text-sm">
        Setup fee {money(sheet.setupFee)}
        {sheet.setupWaivedAtSets !== null ? `, waived from ${sheet.setupWaivedAtSets} sets` : ', never waived'}.
      </p>
      {sheet.stocks.length > 0 && (
        <p className="mt-1 text-sm text-ink-soft">Stocks: {sheet.stocks.map((s) => `${s.name} (+${money(s.surchargePerSet)})`).join(', ')}</p>
      )}
      {canWrite && (
        <div className="mt-4 flex gap-3">
          <Button tone="quiet" className="px-3 py-1" onClick={onEdit} aria-label={`Edit ${sheet.name}`}>
            Edit
          </Button>
          <Button
            tone="danger"
            className="px-3 py-1"
            aria-label={`Delete ${sheet.name}`}
            disabled={remove.isPending}
            onClick={() => {
              if (window.confirm(`Delete the price sheet "${sheet.name}"?`)) remove.mutate(sheet.id);
            }}
          >
            Delete
          </Button>
        </div>
      )}
      <ErrorNote error={remove.error} />
    </Panel>
  );
}

const num = (n: number | null) => (n === null || Number.isNaN(n) ? '' : n);

function SheetForm({ workspaceId, sheet, onDone }: { workspaceId: string; sheet: PriceSheet | null; onDone: () => void }) {
  const save = useSavePriceSheet(workspaceId);
  const [form, setForm] = useState<PriceSheetSettings>(() =>
    sheet ? { name: sheet.name, currency: sheet.currency, tiers: sheet.tiers, setupFee: sheet.setupFee, setupWaivedAtSets: sheet.setupWaivedAtSets, stocks: sheet.stocks } : blankSheet(),
  );
  const [issues, setIssues] = useState<Issues>({});
  const set = (patch: Partial<PriceSheetSettings>) => setForm((f) => ({ ...f, ...patch }));

  const submit = (e: FormEvent) => {
    e.preventDefault();
    const parsed = priceSheetBodySchema.safeParse(form);
    if (!parsed.success) {
      const found: Issues = {};
      for (const i of parsed.error.issues) found[i.path.map(String).join('.') || 'sheet'] ??= i.message;
      setIssues(found);
      return;
    }
    setIssues({});
    save.mutate(
      { id: sheet?.id ?? null, body: parsed.data },
      {
        onSuccess: onDone,
        onError: (err) => {
          if (err instanceof ApiError && err.details) setIssues(Object.fromEntries(err.details.map((d) => [d.path, d.message])));
        },
      },
    );
  };

  const issueList = Object.entries(issues);
  return (
    <Panel title={sheet ? `Edit ${sheet.name}` : 'New price sheet'} className="xl:sticky xl:top-8">
      <form onSubmit={submit} noValidate className="space-y-5">
        <div className="grid gap-4 sm:grid-cols-[1fr_8rem]">
          <InputField label="Sheet name" value={form.name} error={issues.name} onChange={(e) => set({ name: e.target.value })} placeholder="e.g. Invented Press, standard" />
          <ChoiceField label="Currency" value={form.currency} error={issues.currency} onChange={(e) => set({ currency: e.target.value })}>
            {CURRENCIES.map((c) => (
              <option key={c}>{c}</option>
            ))}
          </ChoiceField>
        </div>

        <fieldset>
          <legend className="text-sm font-medium">Deck sizes</legend>
          {issues.tiers && <p className="text-xs font-medium text-cut-deep">{issues.tiers}</p>}
          <ul className="mt-2 space-y-2">
            {form.tiers.map((t, i) => (
              <li key={i} className="grid grid-cols-[1fr_1fr_auto] items-start gap-3">
                <InputField label={`Size ${i + 1}: up to (cards)`} type="number" min={1} step={1} value={num(t.maxCards)} error={issues[`tiers.${i}.maxCards`]} onChange={(e) => set({ tiers: form.tiers.map((x, j) => (j === i ? { ...x, maxCards: e.target.valueAsNumber } : x)) })} />
                <InputField label={`Size ${i + 1}: price per set`} type="number" min={0} step="0.01" value={num(t.pricePerSet)} error={issues[`tiers.${i}.pricePerSet`]} onChange={(e) => set({ tiers: form.tiers.map((x, j) => (j === i ? { ...x, pricePerSet: e.target.valueAsNumber } : x)) })} />
                <Button type="button" tone="danger" className="mt-6 px-3 py-2" aria-label={`Remove deck size ${i + 1}`} onClick={() => set({ tiers: form.tiers.filter((_, j) => j !== i) })}>
                  ✕
                </Button>
              </li>
            ))}
          </ul>
          <Button type="button" tone="quiet" className="mt-2 px-3 py-1" onClick={() => set({ tiers: [...form.tiers, { maxCards: (form.tiers.at(-1)?.maxCards ?? 0) + 18, pricePerSet: NaN }] })}>
            Add a deck size
          </Button>
        </fieldset>

        <div className="grid gap-4 sm:grid-cols-2">
          <InputField label="Setup fee" type="number" min={0} step="0.01" value={num(form.setupFee)} error={issues.setupFee} onChange={(e) => set({ setupFee: e.target.valueAsNumber })} hint="Charged once per order." />
          <InputField
            label="Setup fee waived from (sets)"
            type="number"
            min={1}
            step={1}
            value={num(form.setupWaivedAtSets)}
            error={issues.setupWaivedAtSets}
            onChange={(e) => set({ setupWaivedAtSets: e.target.value === '' ? null : e.target.valueAsNumber })}
            hint="Leave empty if it is never waived."
          />
        </div>

        <fieldset>
          <legend className="text-sm font-medium">Card stocks</legend>
          <ul className="mt-2 space-y-2">
            {form.stocks.map((s, i) => (
              <li key={i} className="grid grid-cols-[1fr_1fr_auto] items-start gap-3">
                <InputField label={`Stock ${i + 1} name`} value={s.name} error={issues[`stocks.${i}.name`]} onChange={(e) => set({ stocks: form.stocks.map((x, j) => (j === i ? { ...x, name: e.target.value } : x)) })} />
                <InputField label={`Stock ${i + 1} surcharge per set`} type="number" min={0} step="0.01" value={num(s.surchargePerSet)} error={issues[`stocks.${i}.surchargePerSet`]} onChange={(e) => set({ stocks: form.stocks.map((x, j) => (j === i ? { ...x, surchargePerSet: e.target.valueAsNumber } : x)) })} />
                <Button type="button" tone="danger" className="mt-6 px-3 py-2" aria-label={`Remove stock ${i + 1}`} onClick={() => set({ stocks: form.stocks.filter((_, j) => j !== i) })}>
                  ✕
                </Button>
              </li>
            ))}
          </ul>
          <Button type="button" tone="quiet" className="mt-2 px-3 py-1" onClick={() => set({ stocks: [...form.stocks, { name: '', surchargePerSet: 0 }] })}>
            Add a stock option
          </Button>
        </fieldset>

        {issueList.length > 0 && (
          <div role="alert" className="rounded-md border border-cut/40 bg-cut/10 px-3 py-2 text-sm text-cut-deep">
            Please fix the {issueList.length === 1 ? 'field' : `${issueList.length} fields`} marked above.
          </div>
        )}
        {save.error && !(save.error instanceof ApiError && save.error.details) && <ErrorNote error={save.error} />}
        <div className="flex gap-3">
          <Button type="submit" disabled={save.isPending}>
            {save.isPending ? 'Saving…' : 'Save price sheet'}
          </Button>
          <Button type="button" tone="quiet" onClick={onDone}>
            Cancel
          </Button>
        </div>
      </form>
    </Panel>
  );
}
