/**
 * UI design tokens: the only source of colours, spacing, radii and type in the app's screens.
 * (Figure themes live beside this file; they draw on the chart palette below.)
 */
export const colors = {
  bg: '#f6f7f9',
  surface: '#ffffff',
  surfaceAlt: '#eef1f5',
  border: '#d5dae1',
  borderStrong: '#9aa3af',
  text: '#16191d',
  textMuted: '#5a6270',
  primary: '#1f4fb4',
  primaryText: '#ffffff',
  primarySoft: '#e4ebfa',
  danger: '#b3261e',
  dangerSoft: '#fbe9e8',
  success: '#1e6b3a',
  successSoft: '#e5f3ea',
  warning: '#8a5a00',
  warningSoft: '#fdf3dc',
  focus: '#f2a900',
  navBg: '#101a2e',
  navText: '#d7deea',
  navTextActive: '#ffffff',
  navActive: '#23365c',
} as const;

export const space = { xs: 4, sm: 8, md: 12, lg: 16, xl: 24, xxl: 32 } as const;
export const radii = { sm: 4, md: 8, lg: 12, pill: 999 } as const;

export const fonts = {
  regular: 'Inter_400Regular',
  medium: 'Inter_500Medium',
  semibold: 'Inter_600SemiBold',
  bold: 'Inter_700Bold',
  /** Tokens and other text that must be read character by character. */
  mono: 'monospace',
} as const;

export const type = {
  caption: { fontSize: 12, lineHeight: 16 },
  body: { fontSize: 15, lineHeight: 22 },
  label: { fontSize: 14, lineHeight: 20 },
  title: { fontSize: 20, lineHeight: 26 },
  heading: { fontSize: 26, lineHeight: 32 },
} as const;

/** Screens cap their content at this width on wide displays. */
export const maxContentWidth = 1040;
/** At or above this window width the app shows the side navigation. */
export const wideBreakpoint = 1024;
export const sideNavWidth = 248;
export const bottomTabHeight = 60;

/**
 * Chart hues in a fixed order, chosen to stay apart for the common colour-vision deficiencies
 * and in greyscale (lightness alternates); figure themes take layer colours from here.
 */
export const chartPalette = ['#1b3f8b', '#c2571a', '#2e8b57', '#7b3f99', '#b8860b', '#4a4a4a'] as const;

/**
 * The quick plot's colours (app preview only; publication figures take theirs from the figure
 * themes). Bands in two blues stay apart from the orange theory curve, also in greyscale.
 */
export const plotColors = {
  observed: '#16191d',
  expected: '#1b3f8b',
  band1: '#9fb7e3',
  band2: '#dbe5f6',
  theory: '#c2571a',
  theoryBand: '#f5dccc',
  grid: '#e6e9ee',
  axis: '#5a6270',
  background: '#ffffff',
} as const;

/**
 * The quick plane preview's colours for a point's limit, lowest (strongest) to highest, on a log
 * scale: light to dark in one hue, so it reads in greyscale too.
 */
export const planeRamp = ['#f3e7c9', '#e3b877', '#c2571a', '#7d2f12', '#3b1606'] as const;

/**
 * The states of a scan's points in its plane drawing (done points take `planeRamp`): queued as
 * light empty cells, running outlined in the app's blue (outside the ramp's hue), failed grey with
 * a dark cross (reads without colour), never computed (cancelled) dashed.
 */
export const planeStateColors = {
  pendingFill: '#ffffff',
  pendingStroke: '#d5dae1',
  runningFill: '#e4ebfa',
  runningStroke: '#1f4fb4',
  failedFill: '#c3c9d2',
  failedMark: '#3d434c',
  cancelledStroke: '#9aa3af',
} as const;
