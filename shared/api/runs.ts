// Request and response shapes of the runs API (/work/notes/runs-api.md). The server validates requests
// with these schemas; the client imports the inferred types. JSON field names are camelCase.
import { z } from 'zod';
import { recipeSchema, type Recipe } from '../recipe.ts';
import { CARD_STATES, RUN_STATES } from '../run-states.ts';
import { FINDING_CODES, type Finding } from '../findings.ts';

// ---------- errors ----------
export type ApiFieldError = { path: string; message: string };
export type ApiError = { error: { code: string; message: string; details?: ApiFieldError[] } };

// ---------- recipes ----------
export const recipeBodySchema = z.strictObject({ settings: recipeSchema });
export type RecipeBody = z.input<typeof recipeBodySchema>;

export const recipeListQuerySchema = z.object({
  archived: z.enum(['true', 'false']).optional(),
});

export const archiveBodySchema = z.strictObject({ archived: z.boolean({ error: 'must be true or false' }) });
export type ArchiveBody = z.input<typeof archiveBodySchema>;

export type RecipeSummary = {
  id: string;
  slug: string;
  name: string;
  archived: boolean;
  version: number;
  updatedAt: string;
};
export type RecipeVersionInfo = { version: number; createdAt: string; createdBy: string | null };
export type RecipeDetail = RecipeSummary & { settings: Recipe; versions: RecipeVersionInfo[] };

export type RecipeListResponse = { recipes: RecipeSummary[] };
export type RecipeResponse = { recipe: RecipeDetail };
export type RecipeVersionResponse = { version: number; settings: Recipe };

// ---------- art sets ----------
export const ART_ENTRY_KINDS = ['image', 'manifest', 'back-candidate', 'junk', 'other'] as const;
export type ArtEntryKind = (typeof ART_ENTRY_KINDS)[number];

export type ArtSetSummary = {
  id: string;
  name: string;
  revision: number;
  entryCount: number;
  cardCount: number;
  createdAt: string;
  updatedAt: string;
};
export type ArtEntryRow = {
  path: string;
  kind: ArtEntryKind;
  bytes: number;
  sha256: string;
  width: number | null;
  height: number | null;
  format: string | null;
};
export type ArtSetRevisionInfo = {
  revision: number;
  createdAt: string;
  entryCount: number;
  sha256: string;
  note: string | null;
};
export type ArtSetDetail = {
  id: string;
  name: string;
  revision: number;
  revisions: ArtSetRevisionInfo[];
  entries: ArtEntryRow[];
  skipped: Array<{ path: string; reason: string }>;
};

export const artSetUploadFieldsSchema = z.object({
  name: z.string().trim().min(1, 'is required').max(120, 'must be 120 characters or fewer').optional(),
});
export const artSetDetailQuerySchema = z.object({
  revision: z.coerce.number().int().min(1).optional(),
});
export const thumbnailQuerySchema = z.object({ path: z.string().min(1, 'is required') });

export type ArtSetListResponse = { artSets: ArtSetSummary[] };
export type ArtSetResponse = { artSet: ArtSetDetail };
export type ArtSetUploadResponse = { artSet: ArtSetDetail; deduplicated: boolean };

// ---------- runs ----------
export const runStateSchema = z.enum(RUN_STATES);
export const cardStateSchema = z.enum(CARD_STATES);
export type { RunState, CardState } from '../run-states.ts';

export const startRunBodySchema = z.strictObject({
  recipeId: z.string({ error: 'is required' }).uuid('must be a recipe id'),
  artSetId: z.string({ error: 'is required' }).uuid('must be an art set id'),
  revision: z.number().int('must be a whole number').min(1, 'must be 1 or more').optional(),
});
export type StartRunBody = z.input<typeof startRunBodySchema>;

export const runListQuerySchema = z.object({
  limit: z.coerce.number().int().min(1).max(200).default(50),
});
export const cardListQuerySchema = z.object({
  severity: z.enum(['info', 'warn', 'error']).optional(),
});
export const cardImageQuerySchema = z.object({
  size: z.enum(['thumb', 'full']).default('thumb'),
});
export const followBodySchema = z.strictObject({ follow: z.boolean({ error: 'must be true or false' }) });
export type FollowBody = z.input<typeof followBodySchema>;

export type RunProgress = { total: number; done: number; skipped: number; failed: number; cached: number };
export type FindingCounts = { info: number; warn: number; error: number };

export type RunSummary = {
  id: string;
  state: z.infer<typeof runStateSchema>;
  recipe: { id: string; name: string; version: number };
  artSet: { id: string; name: string; revision: number };
  progress: RunProgress;
  findings: FindingCounts;
  createdAt: string;
  startedAt: string | null;
  finishedAt: string | null;
  error: string | null;
  createdBy: string | null;
};

export const OUTPUT_KINDS = ['pdf', 'sheets', 'proof', 'report-json', 'report-csv', 'bundle'] as const;
export type OutputKind = (typeof OUTPUT_KINDS)[number];
export type RunOutput = { name: string; kind: OutputKind; bytes: number };

export type RunTotals = {
  cards: number;
  pages: number;
  paddingAdded: number;
  findingsByCode: Record<string, number>;
};
export type RunDiff = {
  previousRunId: string | null;
  added: string[];
  changed: string[];
  removed: string[];
  unchanged: number;
};
export type RunDetail = RunSummary & {
  totals: RunTotals | null;
  outputs: RunOutput[];
  diff: RunDiff;
  following: boolean;
};

export type RunCard = {
  id: string;
  seq: number;
  source: string;
  role: 'front' | 'back';
  state: z.infer<typeof cardStateSchema>;
  cached: boolean;
  outputs: string[];
  sourcePx: { w: number; h: number } | null;
  effectiveDpi: number | null;
  turn: string | null;
  fill: string | null;
  findings: Finding[];
  /** Fronts: 1-based place in the engine's print order (before copies); null for backs. */
  deckOrder: number | null;
  /** Fronts: copies the deck holds (manifest `copies`, default 1; 0 leaves the card out); null for backs. */
  copies: number | null;
  /** Fronts: id of the back card printed on this card's reverse (manifest `back` with `interleaved`, else the recipe's back); null when none. */
  back: string | null;
};

/** First-run guide steps the signed-in member has done in the workspace (GET /workspaces/:id/guide). */
export type GuideProgress = { proofChecked: boolean; pdfDownloaded: boolean };
export type GuideResponse = { guide: GuideProgress };

export type RunListResponse = { runs: RunSummary[] };
export type RunResponse = { run: RunDetail };
export type RunCardsResponse = { cards: RunCard[] };

// ---------- share links ----------
export const createShareBodySchema = z.strictObject({
  expiresInHours: z
    .number({ error: 'must be a number' })
    .int('must be a whole number')
    .min(1, 'must be 1 or more')
    .max(720, 'must be 720 or fewer'),
  label: z.string().trim().max(120, 'must be 120 characters or fewer').optional(),
});
export type CreateShareBody = z.input<typeof createShareBodySchema>;

export type ShareCreated = { id: string; url: string; expiresAt: string; label: string | null };
export type ShareRow = {
  id: string;
  label: string | null;
  expiresAt: string;
  revokedAt: string | null;
  createdAt: string;
  downloads: number;
};
export type PublicShare = {
  runTitle: string;
  workspaceName: string;
  expiresAt: string;
  files: Array<{ name: string; bytes: number }>;
};

export type ShareCreatedResponse = { share: ShareCreated };
export type ShareListResponse = { shares: ShareRow[] };
export type PublicShareResponse = { share: PublicShare };

/** Finding codes known to the engine, for filters and legends. */
export const KNOWN_FINDING_CODES = Object.keys(FINDING_CODES);
