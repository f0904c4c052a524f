// Request schemas of the price sheets routes: the body schema lives in shared/ (the client form uses
// it too); the id parameter is checked here so a malformed id is a 404, not a database error.
import { z } from 'zod';
export { priceSheetBodySchema } from '../../shared/api/price-sheets.ts';

export const priceSheetIdSchema = z.uuid();
