/** One CSV column: its header and unit (written as "header (unit)"). */
export interface CsvColumn {
  readonly header: string;
  readonly unit?: string;
}

export type CsvCell = string | number | boolean | null | undefined;

function cell(value: CsvCell): string {
  if (value === null || value === undefined) return '';
  if (typeof value === 'number') return Number.isFinite(value) ? String(value) : value > 0 ? 'Infinity' : value < 0 ? '-Infinity' : '';
  const text = String(value);
  return /[",\n\r]/.test(text) ? `"${text.replace(/"/g, '""')}"` : text;
}

/** CSV text (RFC 4180 quoting, CRLF line ends) with units in the header row. */
export function toCsv(columns: readonly CsvColumn[], rows: readonly (readonly CsvCell[])[]): string {
  const header = columns.map((c) => cell(c.unit ? `${c.header} (${c.unit})` : c.header)).join(',');
  return [header, ...rows.map((row) => row.map(cell).join(','))].join('\r\n') + '\r\n';
}

/** Offers text to the user as a downloaded file. */
export function downloadText(fileName: string, text: string, type = 'text/csv'): void {
  downloadBlob(fileName, new Blob([text], { type: `${type};charset=utf-8` }));
}

/** Offers a blob to the user as a downloaded file. */
export function downloadBlob(fileName: string, blob: Blob): void {
  const url = URL.createObjectURL(blob);
  const link = document.createElement('a');
  link.href = url;
  link.download = fileName;
  link.style.display = 'none';
  document.body.appendChild(link);
  link.click();
  link.remove();
  setTimeout(() => URL.revokeObjectURL(url), 1000);
}
