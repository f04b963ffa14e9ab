import type { GlobalThemeOverrides } from 'naive-ui';
import { HOUSE_PALETTE } from '../shared/palette';

/**
 * Cayline's palette. The UI is light; the interpretation canvas sits on a dark
 * slate surround so greyscale and red-blue seismic read well.
 */
export const palette = HOUSE_PALETTE;

export const fontFamily =
  "'IBM Plex Sans', system-ui, -apple-system, 'Segoe UI', Roboto, 'Helvetica Neue', Arial, sans-serif";
export const fontFamilyMono = "ui-monospace, SFMono-Regular, Menlo, Consolas, 'Liberation Mono', monospace";

export const themeOverrides: GlobalThemeOverrides = {
  common: {
    fontFamily,
    fontFamilyMono,
    fontWeightStrong: '600',
    primaryColor: palette.lagoon,
    primaryColorHover: palette.lagoonHover,
    primaryColorPressed: palette.lagoonPressed,
    primaryColorSuppl: palette.lagoonSuppl,
    successColor: palette.lagoon,
    successColorHover: palette.lagoonHover,
    successColorPressed: palette.lagoonPressed,
    successColorSuppl: palette.lagoonSuppl,
    warningColor: palette.coral,
    warningColorHover: palette.coralHover,
    warningColorPressed: palette.coralPressed,
    warningColorSuppl: palette.coralSuppl,
    errorColor: palette.coral,
    errorColorHover: palette.coralHover,
    errorColorPressed: palette.coralPressed,
    errorColorSuppl: palette.coralSuppl,
    infoColor: palette.info,
    infoColorHover: '#6493b6',
    infoColorPressed: '#3f6a8a',
    infoColorSuppl: '#6493b6',
    textColorBase: palette.ink,
    textColor1: palette.ink,
    textColor2: '#33414c',
    textColor3: palette.inkMuted,
    bodyColor: palette.page,
    borderRadius: '6px',
    borderRadiusSmall: '4px',
  },
  Card: {
    borderRadius: '10px',
    borderColor: palette.line,
  },
  DataTable: {
    thColor: '#f0f4f5',
    thFontWeight: '600',
  },
  Layout: {
    headerColor: '#ffffff',
    color: palette.page,
  },
};

/** CSS custom properties shared by plain CSS (and later by the canvas). */
export const cssVariables: Record<string, string> = {
  '--cay-lagoon': palette.lagoon,
  '--cay-coral': palette.coral,
  '--cay-sand': palette.sand,
  '--cay-sand-soft': palette.sandSoft,
  '--cay-ink': palette.ink,
  '--cay-ink-muted': palette.inkMuted,
  '--cay-line': palette.line,
  '--cay-page': palette.page,
  '--cay-canvas-surround': palette.canvasSurround,
  '--cay-font': fontFamily,
};

/** Put the CSS variables on the document root (called once from main.ts). */
export function installCssVariables(root: HTMLElement = document.documentElement): void {
  for (const [name, value] of Object.entries(cssVariables)) root.style.setProperty(name, value);
}
