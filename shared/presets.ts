// Card size presets as data (DESIGN.md "Recipe"). Sizes are the trim, in millimetres, portrait.
export type TrimPreset = { name: string; label: string; width: number; height: number; unit: 'mm' };

export const TRIM_PRESETS = [
  { name: 'poker', label: 'Poker 63.5 x 88.9 mm (2.5 x 3.5 in)', width: 63.5, height: 88.9, unit: 'mm' },
  { name: 'bridge', label: 'Bridge 57.15 x 88.9 mm (2.25 x 3.5 in)', width: 57.15, height: 88.9, unit: 'mm' },
  { name: 'tarot', label: 'Tarot 70 x 120 mm', width: 70, height: 120, unit: 'mm' },
  { name: 'mini', label: 'Mini 44 x 63 mm', width: 44, height: 63, unit: 'mm' },
  { name: 'square', label: 'Square 88.9 x 88.9 mm', width: 88.9, height: 88.9, unit: 'mm' },
  // ISO/IEC 7810 ID-1 is specified landscape (85.60 x 53.98 mm); kept as the standard states it.
  { name: 'id1', label: 'ID-1 85.60 x 53.98 mm (ISO/IEC 7810)', width: 85.6, height: 53.98, unit: 'mm' },
] as const satisfies readonly TrimPreset[];

export type TrimPresetName = (typeof TRIM_PRESETS)[number]['name'];

export const TRIM_PRESET_NAMES = TRIM_PRESETS.map((p) => p.name) as [TrimPresetName, ...TrimPresetName[]];

export function findPreset(name: string): TrimPreset | undefined {
  return TRIM_PRESETS.find((p) => p.name === name);
}
