/** The SEG-Y part of the upload form (SegyUploadOptions.vue) and its defaults. */
export interface SegyOptionsModel {
  cdpXByte: number | null;
  cdpYByte: number | null;
  inlineByte: number | null;
  crosslineByte: number | null;
  cdpSpacing: number | null;
  epsg: number | null;
  domain: 'auto' | 'time' | 'depth';
  ramp: 'grey' | 'diverging';
  clipPercentile: number;
  agcMs: number | null;
}

export const defaultSegyOptions = (): SegyOptionsModel => ({
  cdpXByte: null, cdpYByte: null, inlineByte: null, crosslineByte: null, cdpSpacing: null, epsg: null,
  domain: 'auto', ramp: 'grey', clipPercentile: 99, agcMs: null,
});
