/** Placeholder replaced by the SVG renderer. */
export function lineProfileSvg(result: Record<string, unknown>): string {
  return `<?xml version="1.0" encoding="UTF-8"?>\n<svg xmlns="http://www.w3.org/2000/svg" width="10" height="10"><title>${Object.keys(result).length}</title></svg>\n`;
}
