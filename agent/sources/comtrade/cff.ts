/**
 * Splits a 2013 combined file (.cff) into its CFG, INF, HDR and DAT sections.
 * Section marker lines look like `--- file type: CFG ---` or
 * `--- file type: DAT BINARY: 123456 ---` (spelling from memory and uncertain,
 * CHECKS.md §8.3), so they are matched loosely: any run of dashes, any case,
 * optional spaces, and the byte count optional for ASCII data.
 */
import { invalid } from './errors.js';

export interface CffSections {
  readonly cfg: string;
  readonly dat: Uint8Array;
  /** The data type named by the DAT marker (ASCII, BINARY, BINARY32, FLOAT32), upper case. */
  readonly datType: string;
  readonly hdr: string | null;
  readonly inf: string | null;
}

const MARKER = /^-{2,}\s*file\s*type\s*:\s*(CFG|INF|HDR|DAT)(?:\s+(ASCII|BINARY32|BINARY|FLOAT32))?\s*(?::\s*(\d+))?\s*-{2,}\s*$/i;

export function splitCff(content: Uint8Array, fileName: string): CffSections {
  const text = Buffer.from(content.buffer, content.byteOffset, content.byteLength).toString('latin1'); // latin1: one char per byte, so offsets match
  const found: Record<string, string> = {};
  let dat: Uint8Array | null = null;
  let datType = '';
  let pos = 0;
  let line = 1;
  let current: { name: string; start: number; line: number } | null = null;

  const closeText = (end: number) => {
    if (current === null) return;
    if (current.name === 'DAT') dat = content.subarray(current.start, end);
    else {
      if (found[current.name] !== undefined) throw invalid({ file: fileName, line: current.line, field: 'file type' }, `second ${current.name} section`);
      found[current.name] = text.slice(current.start, end);
    }
    current = null;
  };

  while (pos < text.length) {
    const eol = text.indexOf('\n', pos);
    const lineEnd = eol === -1 ? text.length : eol;
    const next = eol === -1 ? text.length : eol + 1;
    const raw = text.slice(pos, lineEnd).replace(/\r$/, '');
    const m = MARKER.exec(raw);
    if (m !== null) {
      closeText(pos);
      const name = m[1]!.toUpperCase();
      if (name === 'DAT') {
        if (dat !== null) throw invalid({ file: fileName, line, field: 'file type' }, 'second DAT section');
        datType = (m[2] ?? 'ASCII').toUpperCase();
        if (datType === 'ASCII') {
          current = { name: 'DAT', start: next, line: line + 1 };
        } else {
          if (m[3] === undefined) throw invalid({ file: fileName, line, field: 'file type' }, `the ${datType} DAT marker must give the byte count ("--- file type: DAT ${datType}: <bytes> ---")`);
          const bytes = Number(m[3]);
          if (next + bytes > content.byteLength) {
            throw invalid({ file: fileName, line, field: 'file type' }, `the DAT section announces ${bytes} bytes but only ${content.byteLength - next} follow`);
          }
          dat = content.subarray(next, next + bytes);
          // Binary data may contain newline bytes: count them so later line numbers stay right.
          for (let k = next; k < next + bytes; k++) if (content[k] === 0x0a) line++;
          pos = next + bytes;
          line++;
          continue;
        }
      } else {
        current = { name, start: next, line: line + 1 };
      }
    } else if (current === null && raw.trim() !== '') {
      throw invalid({ file: fileName, line, field: 'file type' }, `text outside a section; a CFF starts with a marker line like "--- file type: CFG ---"`);
    }
    pos = next;
    line++;
  }
  closeText(text.length);
  if (found.CFG === undefined) throw invalid({ file: fileName, line: null, field: 'file type' }, 'no CFG section ("--- file type: CFG ---")');
  if (dat === null) throw invalid({ file: fileName, line: null, field: 'file type' }, 'no DAT section ("--- file type: DAT ASCII ---" or "--- file type: DAT BINARY: <bytes> ---")');
  return { cfg: found.CFG, dat, datType, hdr: found.HDR ?? null, inf: found.INF ?? null };
}
