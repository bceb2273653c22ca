import { strToU8, Zip, ZipDeflate, ZipPassThrough } from "fflate";

/*
 * Hostile workbooks for the hardening corpus (issue 14, item 8), built as streams so the test
 * never holds what they expand to: a zip bomb (a few hundred KB that unpack to `expandMb` MB) and
 * a sheet of `rows` empty rows.
 */

const CONTENT_TYPES = `<?xml version="1.0" encoding="UTF-8"?><Types xmlns="http://schemas.openxmlformats.org/package/2006/content-types"><Default Extension="rels" ContentType="application/vnd.openxmlformats-package.relationships+xml"/><Default Extension="xml" ContentType="application/xml"/><Override PartName="/xl/workbook.xml" ContentType="application/vnd.openxmlformats-officedocument.spreadsheetml.sheet.main+xml"/><Override PartName="/xl/worksheets/sheet1.xml" ContentType="application/vnd.openxmlformats-officedocument.spreadsheetml.worksheet+xml"/></Types>`;
const RELS = `<?xml version="1.0" encoding="UTF-8"?><Relationships xmlns="http://schemas.openxmlformats.org/package/2006/relationships"><Relationship Id="rId1" Type="http://schemas.openxmlformats.org/officeDocument/2006/relationships/officeDocument" Target="xl/workbook.xml"/></Relationships>`;
const WORKBOOK = `<?xml version="1.0" encoding="UTF-8"?><workbook xmlns="http://schemas.openxmlformats.org/spreadsheetml/2006/main" xmlns:r="http://schemas.openxmlformats.org/officeDocument/2006/relationships"><sheets><sheet name="Sheet1" sheetId="1" r:id="rId1"/></sheets></workbook>`;
const WB_RELS = `<?xml version="1.0" encoding="UTF-8"?><Relationships xmlns="http://schemas.openxmlformats.org/package/2006/relationships"><Relationship Id="rId1" Type="http://schemas.openxmlformats.org/officeDocument/2006/relationships/worksheet" Target="worksheets/sheet1.xml"/></Relationships>`;
const SHEET_HEAD = `<?xml version="1.0" encoding="UTF-8"?><worksheet xmlns="http://schemas.openxmlformats.org/spreadsheetml/2006/main"><sheetData>`;
const SHEET_TAIL = `</sheetData></worksheet>`;

function workbook(sheetBody: (push: (s: string, last?: boolean) => void) => void, extra?: (zip: Zip) => void): Buffer {
  const parts: Uint8Array[] = [];
  const zip = new Zip((err, chunk) => {
    if (err) throw err;
    parts.push(chunk);
  });
  const small = (name: string, text: string) => {
    const f = new ZipPassThrough(name);
    zip.add(f);
    f.push(strToU8(text), true);
  };
  small("[Content_Types].xml", CONTENT_TYPES);
  small("_rels/.rels", RELS);
  small("xl/workbook.xml", WORKBOOK);
  small("xl/_rels/workbook.xml.rels", WB_RELS);
  const sheet = new ZipDeflate("xl/worksheets/sheet1.xml", { level: 9 });
  zip.add(sheet);
  sheetBody((s, last = false) => sheet.push(strToU8(s), last));
  extra?.(zip);
  zip.end();
  return Buffer.concat(parts);
}

/** A workbook whose shared strings unpack to `expandMb` megabytes of spaces. */
export function zipBombXlsx(expandMb: number): Buffer {
  return workbook(
    (push) => push(`${SHEET_HEAD}<row r="1"><c r="A1" t="inlineStr"><is><t>lab_code</t></is></c></row>${SHEET_TAIL}`, true),
    (zip) => {
      const strings = new ZipDeflate("xl/sharedStrings.xml", { level: 1 });
      zip.add(strings);
      const mb = strToU8(" ".repeat(1024 * 1024));
      for (let i = 0; i < expandMb; i++) strings.push(mb, i === expandMb - 1);
    },
  );
}

/** A workbook with a header row and then `rows` empty rows. */
export function emptyRowsXlsx(rows: number): Buffer {
  return workbook((push) => {
    push(`${SHEET_HEAD}<row r="1"><c r="A1" t="inlineStr"><is><t>lab_code</t></is></c></row>`);
    const block: string[] = [];
    for (let r = 2; r <= rows + 1; r++) {
      block.push(`<row r="${r}"/>`);
      if (block.length === 10_000) push(block.splice(0).join(""));
    }
    push(block.join("") + SHEET_TAIL, true);
  });
}
