import { z } from 'zod';

/** GET /api/my-work takes no parameters; anything in its query string is refused by name (strict, like every input). */
export const myWorkQuerySchema = z.strictObject({});
export type MyWorkQuery = z.infer<typeof myWorkQuerySchema>;
