import { z } from 'zod';
import { idSchema } from './common.js';

export const siteSchema = z
  .object({
    id: idSchema,
    name: z.string(),
    code: z.string(),
  })
  .meta({ id: 'Site' });
export type Site = z.infer<typeof siteSchema>;
