/** Species drawn as separate spectrum series up to this count; above it, one total series (shared by the chart and the fragment series). */
export const MAX_SPECTRUM_SERIES = 12;
