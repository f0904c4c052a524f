// The runs API contract's types, from the shared module the server validates with, re-exported in one
// place for the recipe, art set, run and share pages.
export type {
  ArtEntryRow,
  ArtSetDetail,
  ArtSetSummary,
  CardState,
  CreateShareBody,
  PublicShare,
  RecipeDetail,
  RecipeSummary,
  RunCard,
  RunDetail,
  RunOutput,
  RunProgress,
  RunState,
  RunSummary,
  ShareCreated,
  ShareRow,
  StartRunBody,
} from '../../../../shared/api/runs';
export type { Finding, Severity } from '../../../../shared/findings';
export type { Recipe, RecipeInput } from '../../../../shared/recipe';
