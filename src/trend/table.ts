import { InputError } from '../common/index.ts';

/** One row of a trend table: an image, the variable's value for it, and (for profile readings) its walls as `--walls` writes them. */
export interface TrendTableRow { image: string; value: number; walls?: string }

/** Largest trend table read, characters (a few thousand images with their walls). */
export const TREND_TABLE_MAX_CHARS = 2_000_000;

/** The fields of one CSV record (RFC 4180: fields in double quotes may hold commas, semicolons and doubled quotes). */
function csvRecords(text: string): string[][] {
  const out: string[][] = [];
  let row: string[] = [], field = '', quoted = false, i = 0;
  const s = text.replace(/^\uFEFF/, '');
  while (i < s.length) {
    const c = s[i];
    if (quoted) {
      if (c === '"' && s[i + 1] === '"') { field += '"'; i += 2; continue; }
      if (c === '"') { quoted = false; i++; continue; }
      field += c; i++; continue;
    }
    if (c === '"' && field === '') { quoted = true; i++; continue; }
    if (c === ',') { row.push(field); field = ''; i++; continue; }
    if (c === '\r' || c === '\n') {
      row.push(field); field = '';
      if (row.some((f) => f.trim() !== '')) out.push(row);
      row = [];
      i += c === '\r' && s[i + 1] === '\n' ? 2 : 1;
      continue;
    }
    field += c; i++;
  }
  if (quoted) throw new InputError('the table has a quoted field that never closes', 'Close every opening double quote');
  row.push(field);
  if (row.some((f) => f.trim() !== '')) out.push(row);
  return out;
}

/**
 * A trend table (CSV, RFC 4180): one row per image, `image,value` and optionally a third column `walls`
 * ("x1,y1,x2,y2;x3,y3,x4,y4", quoted). A first row whose value is not a number is a header: its names then pick
 * the columns (image, value, walls, in any order); without one the columns are in that order.
 * @throws InputError naming the row that is wrong and what to do
 */
export function parseTrendTable(text: string, name = 'the table'): TrendTableRow[] {
  if (text.length > TREND_TABLE_MAX_CHARS) throw new InputError(`${name} is over ${TREND_TABLE_MAX_CHARS} characters`, 'Give one row per image: image,value');
  const records = csvRecords(text);
  if (records.length === 0) throw new InputError(`${name} has no rows`, 'Give one row per image: image,value');
  let cols = { image: 0, value: 1, walls: 2 };
  let body = records;
  const head = records[0].map((f) => f.trim().toLowerCase());
  if (!Number.isFinite(Number(records[0][1]?.trim() || 'x'))) {
    const at = (k: string) => head.indexOf(k);
    if (at('image') < 0 || at('value') < 0) throw new InputError(`${name}'s header must name the columns image and value (and walls when given), got "${records[0].join(',')}"`, 'Write the first row as: image,value');
    cols = { image: at('image'), value: at('value'), walls: at('walls') };
    body = records.slice(1);
  }
  if (body.length === 0) throw new InputError(`${name} has a header but no rows`, 'Give one row per image: image,value');
  return body.map((r, k) => {
    const line = k + 1 + (body === records ? 0 : 1);
    const image = (r[cols.image] ?? '').trim(), valueText = (r[cols.value] ?? '').trim();
    if (!image) throw new InputError(`${name}, row ${line}: no image named`, 'Give each row an image file and its value');
    const value = Number(valueText);
    if (valueText === '' || !Number.isFinite(value)) throw new InputError(`${name}, row ${line} (${image}): the value "${valueText}" is not a number`, 'Give each image the variable\'s value as a number');
    const walls = cols.walls >= 0 ? (r[cols.walls] ?? '').trim() : '';
    return { image, value, ...(walls ? { walls } : {}) };
  });
}
