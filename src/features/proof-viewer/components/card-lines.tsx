// Trim, bleed and safe lines over a full-size card image, in the image's own pixels (recipeGeometry:
// the page is trim + 2 x bleed, left/top bleed take the floor of the split).
import type { RecipeGeometry } from '../../../../shared/recipe';

export function CardLines({ g }: { g: RecipeGeometry }) {
  const { w, h } = g.pagePx;
  const left = g.bleedEdgesPx.left;
  const top = g.bleedEdgesPx.top;
  const tw = g.trimPx.w;
  const th = g.trimPx.h;
  const s = g.safePx;
  return (
    <svg viewBox={`0 0 ${w} ${h}`} preserveAspectRatio="none" className="pointer-events-none absolute inset-0 h-full w-full" data-testid="card-lines" aria-hidden>
      {/* the bleed, shaded: everything outside the trim is cut away */}
      <path d={`M0 0 H${w} V${h} H0 Z M${left} ${top} V${top + th} H${left + tw} V${top} Z`} fill="#231a30" fillOpacity="0.35" fillRule="evenodd" />
      <rect x={0.5} y={0.5} width={w - 1} height={h - 1} fill="none" stroke="#6b5a80" strokeWidth="1.5" vectorEffect="non-scaling-stroke" strokeDasharray="2 3" />
      <rect x={left} y={top} width={tw} height={th} fill="none" stroke="#d9512c" strokeWidth="2" vectorEffect="non-scaling-stroke" data-line="trim" />
      <rect x={left + s} y={top + s} width={tw - 2 * s} height={th - 2 * s} fill="none" stroke="#2f7d63" strokeWidth="2" strokeDasharray="8 5" vectorEffect="non-scaling-stroke" data-line="safe" />
    </svg>
  );
}
