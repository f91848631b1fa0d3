/**
 * One CSV field (RFC 4180): a field with a comma, quote or line break is enclosed in double quotes,
 * quotes doubled; numbers at full precision; missing or non-finite values are empty fields.
 * Shared by the CLI's CSV output and the app's peak table.
 */
export function csvField(value: string | number | boolean | null | undefined): string {
  if (value === null || value === undefined) return '';
  if (typeof value === 'number') return Number.isFinite(value) ? String(value) : '';
  const text = String(value);
  return /[",\r\n]/.test(text) ? `"${text.replace(/"/g, '""')}"` : text;
}
