/** Most points drawn per series; plenty for a screen-wide line (the CSV export keeps every row). */
export const MAX_PLOTTED_POINTS = 5000;
