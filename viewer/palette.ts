/**
 * Colours: the Okabe–Ito palette (Okabe & Ito, "Color Universal Design", 2002; widely reproduced, e.g.
 * Wong, Nature Methods 8, 441 (2011)), chosen to stay distinguishable with the common colour-vision
 * deficiencies. Every curve also differs by line style or markers, so no reading depends on colour alone.
 */
export const OKABE_ITO = {
  black: '#000000',
  orange: '#E69F00',
  skyBlue: '#56B4E9',
  bluishGreen: '#009E73',
  yellow: '#F0E442',
  blue: '#0072B2',
  vermillion: '#D55E00',
  reddishPurple: '#CC79A7',
} as const;

/** What each kind of curve is drawn with, everywhere in the page and in exported images. */
export const STYLE = {
  data: { stroke: OKABE_ITO.blue, width: 1 },
  irf: { stroke: OKABE_ITO.orange, width: 1.5, dash: [6, 4] },
  model: { stroke: OKABE_ITO.black, width: 1.75 },
  residual: { stroke: OKABE_ITO.blue, width: 1 },
  zero: { stroke: '#777777', width: 1, dash: [3, 3] },
  autocorrelation: { stroke: OKABE_ITO.bluishGreen, width: 1.5 },
  seriesPoints: { stroke: OKABE_ITO.vermillion, fill: OKABE_ITO.vermillion },
  seriesFit: { stroke: OKABE_ITO.black, width: 1.5, dash: [8, 4] },
};
