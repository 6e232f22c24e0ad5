import fs from 'node:fs';
import { createRequire } from 'node:module';
import zlib from 'node:zlib';
import PDFDocument from 'pdfkit';
import QRCode from 'qrcode';
import type { Verdict } from '@shared/measure/spec';
import type { PartSheet, SheetClearance } from '@shared/public/sheet.schema';

const require = createRequire(import.meta.url);
// The interface and figure faces the site uses (DESIGN.md), embedded so the sheet prints the same anywhere.
const FONTS = {
  sans: require.resolve('@fontsource/ibm-plex-sans/files/ibm-plex-sans-latin-400-normal.woff'),
  bold: require.resolve('@fontsource/ibm-plex-sans/files/ibm-plex-sans-latin-600-normal.woff'),
  mono: require.resolve('@fontsource/ibm-plex-mono/files/ibm-plex-mono-latin-400-normal.woff'),
};

/**
 * A WOFF 1.0 font (W3C Recommendation, 2012) unpacked to the plain sfnt it wraps: fontkit reads
 * WOFF but cannot subset it for embedding, so pdfkit is given the TrueType file instead.
 */
export function woffToSfnt(woff: Buffer): Buffer {
  if (woff.toString('latin1', 0, 4) !== 'wOFF') throw new Error('not a WOFF 1.0 font');
  const flavor = woff.readUInt32BE(4);
  const numTables = woff.readUInt16BE(12);
  const tables = Array.from({ length: numTables }, (_, i) => {
    const at = 44 + i * 20;
    const tag = woff.readUInt32BE(at);
    const offset = woff.readUInt32BE(at + 4);
    const compLength = woff.readUInt32BE(at + 8);
    const origLength = woff.readUInt32BE(at + 12);
    const checksum = woff.readUInt32BE(at + 16);
    const raw = woff.subarray(offset, offset + compLength);
    // A table is stored compressed only when that made it smaller (WOFF 1.0 §5).
    return { tag, checksum, data: compLength < origLength ? zlib.inflateSync(raw) : raw };
  });
  const entrySelector = Math.floor(Math.log2(numTables));
  const searchRange = 2 ** entrySelector * 16;
  const headerLength = 12 + numTables * 16;
  const padded = (n: number) => (n + 3) & ~3;
  const out = Buffer.alloc(headerLength + tables.reduce((sum, t) => sum + padded(t.data.length), 0));
  out.writeUInt32BE(flavor, 0);
  out.writeUInt16BE(numTables, 4);
  out.writeUInt16BE(searchRange, 6);
  out.writeUInt16BE(entrySelector, 8);
  out.writeUInt16BE(numTables * 16 - searchRange, 10);
  let offset = headerLength;
  tables.forEach((t, i) => {
    const at = 12 + i * 16;
    out.writeUInt32BE(t.tag, at);
    out.writeUInt32BE(t.checksum, at + 4);
    out.writeUInt32BE(offset, at + 8);
    out.writeUInt32BE(t.data.length, at + 12);
    t.data.copy(out, offset);
    offset += padded(t.data.length);
  });
  return out;
}

let fonts: Record<keyof typeof FONTS, Buffer> | null = null;
function loadFonts() {
  fonts ??= {
    sans: woffToSfnt(fs.readFileSync(FONTS.sans)),
    bold: woffToSfnt(fs.readFileSync(FONTS.bold)),
    mono: woffToSfnt(fs.readFileSync(FONTS.mono)),
  };
  return fonts;
}

const INK = '#2b2b2b';
const MUTED = '#5c5c5c';
/** Engineer's marking blue, the one accent (DESIGN.md). */
const ACCENT = '#1f4fa8';

const calibrationWords = { 'in-date': 'calibration in date', overdue: 'calibration overdue on the day of a reading', 'no-record': 'no calibration on record' } as const;

const sentenceCase = (words: string) => words.charAt(0).toUpperCase() + words.slice(1);

/** "Spec band 0.0015–0.0040 in · preferred band 0.0020–0.0030 in · reject limit 0.0050 in", or null with no spec. */
export function limitsLine(limits: SheetClearance['limits']): string | null {
  const parts = [
    limits.band && `Spec band ${limits.band}`,
    limits.preferred && `preferred band ${limits.preferred}`,
    limits.reject && `reject limit ${limits.reject}`,
  ].filter(Boolean);
  return parts.length ? parts.join(' · ') : null;
}

/** After a reading's figure: what was read when it differs, the instrument and serial, the day, the zero offset, who checked. */
export function readingFacts(r: SheetClearance['readings'][number]): string {
  const typed = r.figure === r.read ? '' : ` (read ${r.read})`;
  const serial = r.instrumentSerial ? `, serial ${r.instrumentSerial}` : '';
  const zero = r.zeroOffset ? `; zero offset ${r.zeroOffset.text} taken off` : r.zeroCheckMissing ? '; no zero check that day, no offset taken off' : '';
  return `${typed} — ${r.instrumentName}${serial}, ${r.takenOn}${zero}; checked by ${r.checkedBy}`;
}

/** "Calibrated 2026-01-05, due 2036-01-03; calibration in date (readings of 2026-11-20)". */
export function instrumentCalibration(i: PartSheet['instruments'][number]): string {
  const days = i.readingDays.length ? ` (readings of ${i.readingDays.join(', ')})` : '';
  const record = i.calibratedOn
    ? `Calibrated ${i.calibratedOn}${i.readingDays[0] && i.calibratedOn > i.readingDays[0] ? ' (after the first reading on this sheet)' : ''}, ${i.calibrationDueOn ? `due ${i.calibrationDueOn}` : 'no interval recorded'}`
    : 'No calibration date recorded';
  return `${record}; ${calibrationWords[i.calibration]}${days}.`;
}

/** "Clearances" when every result on the sheet is a length (a gap), else "Results" (DEVELOPERS.md, Words). */
export function resultsHeading(clearances: readonly Pick<SheetClearance, 'quantity'>[]): string {
  return clearances.every((c) => (c.quantity ?? 'length') === 'length') ? 'Clearances' : 'Results';
}

/** The QR code of a sheet, as PNG: what the PDF embeds. */
export function sheetQrPng(verifyUrl: string): Promise<Buffer> {
  return QRCode.toBuffer(verifyUrl, { type: 'png', errorCorrectionLevel: 'M', margin: 2, width: 360 });
}

/**
 * Verdicts never by colour alone (DESIGN.md): a filled circle, an open cross, a half-filled
 * diamond, drawn as shapes so they print on any printer and need no glyphs from the font.
 */
function verdictMark(doc: PDFKit.PDFDocument, verdict: Verdict | null, x: number, y: number) {
  const r = 4;
  doc.save().lineWidth(1.2).strokeColor(INK).fillColor(INK);
  if (verdict === 'conforms') doc.circle(x + r, y + r, r).fill();
  else if (verdict === 'does-not-conform') doc.moveTo(x, y).lineTo(x + 2 * r, y + 2 * r).moveTo(x + 2 * r, y).lineTo(x, y + 2 * r).stroke();
  else if (verdict === 'undecided') {
    doc.polygon([x + r, y], [x + 2 * r, y + r], [x + r, y + 2 * r], [x, y + r]).stroke();
    doc.polygon([x + r, y], [x + r, y + 2 * r], [x, y + r]).fill();
  } else doc.circle(x + r, y + r, r).stroke();
  doc.restore();
}

/**
 * An A4 inspection sheet: the part, every clearance with U, its verdict and rule, the spec's band,
 * preferred band and reject limit with where the value lies against them, the readings with their
 * instruments' serials and zero offsets, each instrument's calibration and due date, checks, the
 * caution, and a QR code to verify it.
 */
export async function sheetPdf(sheet: PartSheet, opts: { generatedAt: Date }): Promise<Buffer> {
  const qr = await sheetQrPng(sheet.verifyUrl);
  const doc = new PDFDocument({
    size: 'A4',
    margins: { top: 56, bottom: 56, left: 56, right: 56 },
    info: {
      Title: `Inspection sheet: ${sheet.part.name} ${sheet.part.serial}`.trim(),
      Author: sheet.builder.displayName,
      Subject: sheet.build.title,
      Creator: 'Benchproof',
    },
  });
  const faces = loadFonts();
  doc.registerFont('sans', faces.sans);
  doc.registerFont('bold', faces.bold);
  doc.registerFont('mono', faces.mono);
  const chunks: Buffer[] = [];
  doc.on('data', (c: Buffer) => chunks.push(c));
  const done = new Promise<Buffer>((resolve, reject) => {
    doc.on('end', () => resolve(Buffer.concat(chunks)));
    doc.on('error', reject);
  });

  const left = doc.page.margins.left;
  const width = doc.page.width - left - doc.page.margins.right;
  const qrSize = 110;

  // Head: what part this is, and the QR code beside it.
  const top = doc.y;
  doc.image(qr, left + width - qrSize, top, { width: qrSize, height: qrSize });
  doc.font('bold').fontSize(9).fillColor(ACCENT).text('INSPECTION SHEET', left, top, { width: width - qrSize - 12, characterSpacing: 1 });
  doc.moveDown(0.3);
  doc.font('bold').fontSize(18).fillColor(INK).text(sheet.part.name, { width: width - qrSize - 12 });
  doc.font('mono').fontSize(14).text(`Serial ${sheet.part.serial || '(none stamped)'}`, { width: width - qrSize - 12 });
  doc.moveDown(0.4);
  doc.font('sans').fontSize(10).fillColor(MUTED);
  doc.text(`Build: ${sheet.build.title}`, { width: width - qrSize - 12 });
  doc.text(`Builder: ${sheet.builder.displayName}${sheet.builder.shop ? `, ${sheet.builder.shop}` : ''}`, { width: width - qrSize - 12 });
  for (const p of sheet.publications) {
    doc.text(`From: “${p.title}”, revision ${p.revision}, published ${p.publishedAt.slice(0, 10)} by ${p.publishedBy}`, { width: width - qrSize - 12 });
  }
  doc.y = Math.max(doc.y, top + qrSize + 8);
  doc.font('sans').fontSize(8).fillColor(MUTED).text(`Scan to check these figures are still the published ones: ${sheet.verifyUrl}`, left, doc.y, { width });
  doc.moveDown(1);

  // Clearances, or results when some are not gaps (a torque, a compression ratio).
  doc.font('bold').fontSize(12).fillColor(INK).text(resultsHeading(sheet.clearances), left, doc.y, { width });
  doc.moveDown(0.3);
  for (const c of sheet.clearances) {
    if (doc.y > doc.page.height - doc.page.margins.bottom - 120) doc.addPage();
    doc.moveTo(left, doc.y).lineTo(left + width, doc.y).lineWidth(0.5).strokeColor('#b8b8b8').stroke();
    doc.moveDown(0.4);
    doc.font('bold').fontSize(11).fillColor(INK).text(c.name, left, doc.y, { width });
    doc.font('mono').fontSize(12).text(c.display, { width });
    // One verdict, stated first; the preferred band and reject limit follow as facts in words.
    const markY = doc.y + 2;
    verdictMark(doc, c.verdict, left, markY);
    doc.font('bold').fontSize(11).text(sentenceCase(c.verdictWords), left + 14, doc.y, { width: width - 14 });
    doc.font('sans').fontSize(8.5).fillColor(MUTED);
    if (c.ruleText) doc.text(c.ruleText, left, doc.y, { width });
    const limits = limitsLine(c.limits);
    if (limits) doc.font('sans').fontSize(9).fillColor(INK).text(limits, left, doc.y, { width });
    for (const fact of c.limitFacts) doc.font('sans').fontSize(9).fillColor(INK).text(fact, left, doc.y, { width });
    doc.font('sans').fontSize(8.5).fillColor(MUTED);
    if (c.spec) doc.text(`Spec: ${c.spec.name}, version ${c.spec.version}. Source (${c.spec.sourceKind}): ${c.spec.sourceText}`, left, doc.y, { width });
    for (const r of c.readings) {
      doc.font('mono').fontSize(8.5).fillColor(INK).text(`${r.name}: ${r.figure}`, left, doc.y, { width, continued: true });
      doc.font('sans').fillColor(MUTED).text(` ${readingFacts(r)}`, { width });
    }
    doc.font('sans').fontSize(8.5).fillColor(MUTED).text(`Checked against the footage by ${c.checkedBy} on ${c.checkedAt.slice(0, 10)}. From story ${c.storyId}, revision ${c.revision}.`, { width });
    doc.moveDown(0.6);
  }

  // Instruments.
  if (doc.y > doc.page.height - doc.page.margins.bottom - 140) doc.addPage();
  doc.font('bold').fontSize(12).fillColor(INK).text('Instruments', left, doc.y, { width });
  doc.moveDown(0.2);
  for (const i of sheet.instruments) {
    doc.font('sans').fontSize(9).fillColor(INK).text(`${i.name}, ${i.serial ? `serial ${i.serial}` : 'no serial recorded'}`, left, doc.y, { width });
    doc.fillColor(MUTED).fontSize(8.5).text(instrumentCalibration(i), { width, indent: 10 });
    for (const w of i.warnings) doc.fillColor(MUTED).fontSize(8).text(w.message, { width, indent: 10 });
  }
  doc.moveDown(0.6);
  doc.font('sans').fontSize(9).fillColor(INK).text(`Checked by: ${sheet.checkedBy.join(', ')}`, { width });
  doc.moveDown(0.8);

  // The standing caution, boxed so it is not lost at the foot of the page.
  if (doc.y > doc.page.height - doc.page.margins.bottom - 80) doc.addPage();
  const boxTop = doc.y;
  doc.font('bold').fontSize(9).fillColor(INK).text('Caution', left + 8, boxTop + 6, { width: width - 16 });
  doc.font('sans').fontSize(8.5).text(sheet.caution, { width: width - 16 });
  doc.rect(left, boxTop, width, doc.y - boxTop + 6).lineWidth(0.8).strokeColor(INK).stroke();
  doc.y += 14;
  doc.font('sans').fontSize(7.5).fillColor(MUTED).text(`Printed from Benchproof on ${opts.generatedAt.toISOString().slice(0, 16).replace('T', ' ')} UTC.`, left, doc.y, { width });

  doc.end();
  return done;
}
