// The live recipe preview: a card drawn to scale in SVG (1 user unit = 1 mm) with the bleed area, the
// trim (cut) line and the safe line, the bleed fill illustrated, dimension labels in the chosen unit,
// and a landscape sample showing how such art will be turned. Pure: settings in, drawing out.
import { useId, type ReactNode } from 'react';
import type { LengthUnit } from '../../../../shared/units';
import { formatLength, previewGeometry, type PreviewGeometry, type PreviewSettings } from './preview-geometry';

const CUT = '#d9512c';
const SAFE = '#2f7d63';
const INK = '#231a30';

const FILL_TEXT: Record<string, string> = {
  solid: 'solid colour',
  edge: 'edge pixels repeated',
  mirror: 'edge mirrored',
  auto: 'auto (solid if the edge is one colour, else mirror)',
};

const TURN_TEXT: Record<string, string> = {
  clockwise: 'turned clockwise',
  counterclockwise: 'turned counterclockwise',
  keep: 'kept landscape',
};

export function RecipePreview({ settings, unit }: { settings: PreviewSettings; unit?: LengthUnit }) {
  const g = previewGeometry(settings);
  const show: LengthUnit = unit ?? settings.bleed?.unit ?? 'in';
  if (!g) {
    return (
      <div data-testid="recipe-preview" data-valid="false" className="rounded-md border border-dashed border-line p-6 text-sm text-ink-soft">
        Type a trim, bleed and safe margin that fit together to see the card.
      </div>
    );
  }
  const fillMode = settings.fill?.mode ?? 'auto';
  const turn = settings.turn ?? 'clockwise';
  return (
    <figure data-testid="recipe-preview" data-valid="true" data-unit={show} className="space-y-4">
      <CardDrawing g={g} unit={show} fill={settings.fill ?? { mode: 'auto' }} />
      <figcaption className="space-y-1.5 text-xs text-ink-soft">
        <Legend swatch={<span className="inline-block h-0.5 w-5" style={{ background: CUT }} />}>
          Trim (cut) line · <span data-testid="preview-trim">{formatLength(g.trimW, show)} x {formatLength(g.trimH, show)}</span>
        </Legend>
        <Legend swatch={<span className="inline-block h-2.5 w-5 bg-paper-deep ring-1 ring-line" />}>
          Bleed <span data-testid="preview-bleed">{formatLength(g.bleed, show)}</span> each side, cut away · fill: {FILL_TEXT[fillMode]}
        </Legend>
        <Legend swatch={<span className="inline-block w-5 border-t-2 border-dashed" style={{ borderColor: SAFE }} />}>
          Safe margin <span data-testid="preview-safe">{formatLength(g.safe, show)}</span> inside the trim: keep text and faces within
        </Legend>
        <p>
          Page with bleed <span className="font-mono text-ink" data-testid="preview-page">{formatLength(g.pageW, show)} x {formatLength(g.pageH, show)}</span>
        </p>
      </figcaption>
      <TurnSample g={g} turn={turn} />
    </figure>
  );
}

function Legend({ swatch, children }: { swatch: ReactNode; children: ReactNode }) {
  return (
    <p className="flex items-center gap-2">
      <span aria-hidden className="inline-flex w-5 shrink-0 items-center">
        {swatch}
      </span>
      <span>{children}</span>
    </p>
  );
}

/** Gradient "art" of our own so the preview never needs an image. */
function ArtDefs({ id }: { id: string }) {
  return (
    <>
      <linearGradient id={`${id}-art`} x1="0" y1="0" x2="0.4" y2="1">
        <stop offset="0" stopColor="#46325c" />
        <stop offset="0.55" stopColor="#8a4f7d" />
        <stop offset="1" stopColor="#e39b5c" />
      </linearGradient>
    </>
  );
}

function CardDrawing({ g, unit, fill }: { g: PreviewGeometry; unit: LengthUnit; fill: NonNullable<PreviewSettings['fill']> }) {
  const id = useId().replace(/:/g, '');
  const side = Math.max(g.pageW, g.pageH);
  const fs = side * 0.042;
  const left = fs * 4.2;
  const top = fs * 3.2;
  const bottom = fs * 4.2;
  const right = fs * 1.5;
  const vb = [-left, -top, g.pageW + left + right, g.pageH + top + bottom];
  const b = g.bleed;
  const s = g.safe;
  const stroke = side * 0.006;
  const scaleMm = unit === 'in' ? 12.7 : 10; // half an inch or a centimetre
  const label = `Card preview: trim ${formatLength(g.trimW, unit)} by ${formatLength(g.trimH, unit)}, bleed ${formatLength(b, unit)}, safe margin ${formatLength(s, unit)}, fill ${fill.mode}`;

  let bleedFill: string;
  if (fill.mode === 'solid') bleedFill = /^#[0-9a-f]{6}$/i.test(fill.color) ? fill.color : '#ffffff';
  else bleedFill = `url(#${id}-${fill.mode})`;

  return (
    <svg viewBox={vb.join(' ')} role="img" aria-label={label} className="mx-auto block max-h-[28rem] w-full" data-testid="preview-svg" data-trim-mm={`${g.trimW.toFixed(2)}x${g.trimH.toFixed(2)}`}>
      <title>{label}</title>
      <defs>
        <ArtDefs id={id} />
        {/* edge: the outermost pixels repeated outwards, drawn as streaks */}
        <pattern id={`${id}-edge`} width={side * 0.02} height={side * 0.02} patternUnits="userSpaceOnUse">
          <rect width={side * 0.02} height={side * 0.02} fill="#6d4070" />
          <rect width={side * 0.01} height={side * 0.02} fill="#7d4a78" />
        </pattern>
        {/* mirror: the art reflected at the trim */}
        <linearGradient id={`${id}-mirror`} x1="0" y1="1" x2="0.4" y2="0">
          <stop offset="0" stopColor="#46325c" />
          <stop offset="0.55" stopColor="#8a4f7d" />
          <stop offset="1" stopColor="#e39b5c" />
        </linearGradient>
        {/* auto: decided per card, shown hatched */}
        <pattern id={`${id}-auto`} width={side * 0.025} height={side * 0.025} patternUnits="userSpaceOnUse" patternTransform="rotate(45)">
          <rect width={side * 0.025} height={side * 0.025} fill="#ebe2d0" />
          <rect width={side * 0.008} height={side * 0.025} fill="#8a4f7d" opacity="0.55" />
        </pattern>
      </defs>

      {/* bleed area, then the art inside the trim */}
      <rect x={0} y={0} width={g.pageW} height={g.pageH} fill={bleedFill} stroke="#9a8cab" strokeWidth={stroke * 0.6} data-testid="preview-bleed-area" data-fill={fill.mode} />
      <rect x={b} y={b} width={g.trimW} height={g.trimH} fill={`url(#${id}-art)`} />
      <circle cx={b + g.trimW * 0.5} cy={b + g.trimH * 0.38} r={Math.min(g.trimW, g.trimH) * 0.22} fill="#f6f1e7" opacity="0.85" />
      <path
        d={`M ${b} ${b + g.trimH * 0.78} L ${b + g.trimW * 0.35} ${b + g.trimH * 0.6} L ${b + g.trimW * 0.6} ${b + g.trimH * 0.72} L ${b + g.trimW} ${b + g.trimH * 0.55} L ${b + g.trimW} ${b + g.trimH} L ${b} ${b + g.trimH} Z`}
        fill="#2e1f3f"
        opacity="0.7"
      />
      <text x={b + s + fs * 0.4} y={b + s + fs * 1.2} fontSize={fs} fill="#f6f1e7" fontFamily="Inter, sans-serif" fontWeight="600">
        Card title
      </text>

      {/* trim (cut) and safe lines */}
      <rect x={b} y={b} width={g.trimW} height={g.trimH} fill="none" stroke={CUT} strokeWidth={stroke} data-testid="preview-trim-line" />
      <rect x={b + s} y={b + s} width={g.trimW - 2 * s} height={g.trimH - 2 * s} fill="none" stroke={SAFE} strokeWidth={stroke} strokeDasharray={`${stroke * 4} ${stroke * 3}`} />

      {/* dimensions: trim width above, trim height to the left, page below */}
      <Dimension x1={b} y1={-top * 0.45} x2={b + g.trimW} y2={-top * 0.45} text={formatLength(g.trimW, unit)} fs={fs} stroke={stroke} testId="preview-dim-width" />
      <Dimension x1={-left * 0.35} y1={b} x2={-left * 0.35} y2={b + g.trimH} text={formatLength(g.trimH, unit)} fs={fs} stroke={stroke} vertical testId="preview-dim-height" />
      <text x={g.pageW / 2} y={g.pageH + fs * 1.6} fontSize={fs * 0.85} textAnchor="middle" fill={INK} fontFamily="Roboto Mono, monospace">
        bleed {formatLength(b, unit)} · safe {formatLength(s, unit)}
      </text>
      {/* a scale bar, so the drawing can be read as to scale */}
      <g transform={`translate(0 ${g.pageH + fs * 2.9})`}>
        <rect x={0} y={0} width={scaleMm} height={fs * 0.35} fill={INK} />
        <text x={scaleMm + fs * 0.4} y={fs * 0.4} fontSize={fs * 0.75} fill={INK} fontFamily="Roboto Mono, monospace">
          {unit === 'in' ? '0.5 in' : '10 mm'}
        </text>
      </g>
    </svg>
  );
}

function Dimension({ x1, y1, x2, y2, text, fs, stroke, vertical, testId }: { x1: number; y1: number; x2: number; y2: number; text: string; fs: number; stroke: number; vertical?: boolean; testId: string }) {
  const tick = fs * 0.4;
  const mx = (x1 + x2) / 2;
  const my = (y1 + y2) / 2;
  return (
    <g stroke={INK} strokeWidth={stroke * 0.7}>
      <line x1={x1} y1={y1} x2={x2} y2={y2} />
      {vertical ? (
        <>
          <line x1={x1 - tick} y1={y1} x2={x1 + tick} y2={y1} />
          <line x1={x2 - tick} y1={y2} x2={x2 + tick} y2={y2} />
        </>
      ) : (
        <>
          <line x1={x1} y1={y1 - tick} x2={x1} y2={y1 + tick} />
          <line x1={x2} y1={y2 - tick} x2={x2} y2={y2 + tick} />
        </>
      )}
      <text
        x={vertical ? mx - fs * 0.5 : mx}
        y={vertical ? my : my - fs * 0.5}
        fontSize={fs}
        textAnchor="middle"
        stroke="none"
        fill={INK}
        fontFamily="Roboto Mono, monospace"
        transform={vertical ? `rotate(-90 ${mx - fs * 0.5} ${my})` : undefined}
        data-testid={testId}
      >
        {text}
      </text>
    </g>
  );
}

/** Landscape art (its top edge marked) and the portrait card it becomes under the recipe's turn. */
function TurnSample({ g, turn }: { g: PreviewGeometry; turn: string }) {
  const id = useId().replace(/:/g, '');
  const w = g.trimW;
  const h = g.trimH;
  const portrait = h >= w;
  // Art that is wider than the card is tall-for-wide: its long side runs across.
  const artW = portrait ? h : w;
  const artH = portrait ? w : h;
  const gap = Math.max(w, h) * 0.45;
  const fs = Math.max(w, h) * 0.07;
  const art = (
    <>
      <rect width={artW} height={artH} fill={`url(#${id}-art)`} rx={artH * 0.03} />
      <path d={`M ${artW * 0.5 - fs} ${fs * 1.6} L ${artW * 0.5} ${fs * 0.4} L ${artW * 0.5 + fs} ${fs * 1.6} Z`} fill="#f6f1e7" />
      <text x={artW * 0.5} y={fs * 2.8} fontSize={fs} textAnchor="middle" fill="#f6f1e7" fontFamily="Inter, sans-serif" fontWeight="600">
        top
      </text>
    </>
  );
  let result: ReactNode;
  let resultW = artW;
  let resultH = artH;
  if (!portrait || turn === 'keep') {
    result = art;
  } else if (turn === 'clockwise') {
    resultW = artH;
    resultH = artW;
    result = <g transform={`translate(${artH} 0) rotate(90)`}>{art}</g>;
  } else {
    resultW = artH;
    resultH = artW;
    result = <g transform={`translate(0 ${artW}) rotate(-90)`}>{art}</g>;
  }
  const totalW = artW + gap + resultW;
  const totalH = Math.max(artH, resultH) + fs * 2;
  const text = portrait ? `Landscape art is ${TURN_TEXT[turn] ?? turn}.` : 'This card is landscape: landscape art is used as it is.';
  return (
    <div className="rounded-md border border-line bg-white/60 p-3">
      <p className="mb-2 text-xs font-medium text-ink" data-testid="preview-turn">
        {text}
      </p>
      <svg viewBox={`0 0 ${totalW} ${totalH}`} role="img" aria-label={text} className="block max-h-32 w-full">
        <defs>
          <ArtDefs id={id} />
          <marker id={`${id}-arrow`} viewBox="0 0 10 10" refX="8" refY="5" markerWidth="5" markerHeight="5" orient="auto">
            <path d="M0 0 L10 5 L0 10 Z" fill={INK} />
          </marker>
        </defs>
        <g transform={`translate(0 ${(totalH - fs * 2 - artH) / 2})`}>{art}</g>
        <line x1={artW + gap * 0.15} y1={totalH / 2 - fs} x2={artW + gap * 0.85} y2={totalH / 2 - fs} stroke={INK} strokeWidth={fs * 0.15} markerEnd={`url(#${id}-arrow)`} />
        <g transform={`translate(${artW + gap} ${(totalH - fs * 2 - resultH) / 2})`} data-testid="preview-turn-result" data-turn={turn}>
          {result}
          <rect width={resultW} height={resultH} fill="none" stroke={CUT} strokeWidth={fs * 0.12} />
        </g>
        <text x={artW / 2} y={totalH - fs * 0.3} fontSize={fs * 0.9} textAnchor="middle" fill={INK} fontFamily="Inter, sans-serif">
          art
        </text>
        <text x={artW + gap + resultW / 2} y={totalH - fs * 0.3} fontSize={fs * 0.9} textAnchor="middle" fill={INK} fontFamily="Inter, sans-serif">
          card
        </text>
      </svg>
    </div>
  );
}
