/**
 * Query strings and bodies of the report and export routes. Units follow
 * shared/units.ts; the stretch follows the editor's vertical-stretch range.
 */
import { z } from 'zod';
import { LENGTH_UNITS } from '../units';
import { idParamSchema } from './ids';
import { PAPERS, STRETCH_MAX, STRETCH_MIN } from '../report/report';

export const EXPORT_FORMATS = ['csv', 'json', 'geojson', 'png', 'svg', 'pdf'] as const;

const paper = z.enum(Object.keys(PAPERS) as [keyof typeof PAPERS, ...(keyof typeof PAPERS)[]]);
const unit = z.enum(LENGTH_UNITS);
const stretch = z.coerce.number().min(STRETCH_MIN).max(STRETCH_MAX);

/** `?unit=m|ft&stretch=0.25…8` */
export const reportQuerySchema = z.object({ unit: unit.optional(), stretch: stretch.optional() });

/** `?unit&stretch&paper=a4|letter&bom=1` */
export const exportQuerySchema = reportQuerySchema.extend({
  paper: paper.optional(),
  bom: z.enum(['0', '1', 'true', 'false']).optional(),
});

export const exportParamsSchema = z.object({ id: idParamSchema, format: z.enum(EXPORT_FORMATS) });

/** `POST /buildups/:id/report/pdf` */
export const requestReportSchema = z.object({ paper: paper.optional(), unit: unit.optional(), stretch: stretch.optional() });
