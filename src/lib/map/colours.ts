// Apart from style.ts (which re-exports them), so that a page can draw a map's legend without the
// basemap style.

/** Map colours, taken from the Tailwind palette (tailwind.config.ts). */
export const MAP_COLOURS = {
	sea: '#d5e8ee', // deep-100
	graticule: '#a9d0dc', // deep-200
	land: '#eadcb9', // sand-200
	coast: '#bf914b', // sand-500
	track: '#13485b', // deep-700
	cell: '#dc5a40', // coral-500
	cellOutline: '#ffffff',
	start: '#1b7a6e', // lagoon-600
	latest: '#a33622', // coral-700
	publicCell: '#0c2b37' // deep-900
} as const;
