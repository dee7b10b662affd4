/**
 * Calibration certificate PDF (pdfkit; Inter for text, JetBrains Mono for numbers, both embedded).
 *
 * README — what the certificate covers of ISO/IEC 17025:2017 §7.8 (clause numbers as we read the
 * 2017 edition; confirm against the standard before quoting them to an assessor):
 * - §7.8.2.1 common content: title; laboratory name and address; where the work was done
 *   (`placeOfWork`, including at the customer's site); a unique identification on every page and
 *   a marked end; customer name and address; the method (procedure, points, hold time) and any
 *   deviations from it; the item's description, identification and condition; the dates of
 *   calibration and of issue; the results with their units; the statement that the results relate
 *   only to the item calibrated; who authorised the certificate (the approval signature).
 * - §7.8.4.1 calibration certificates: expanded uncertainty per point (k = 2) in % of span; the
 *   environmental conditions; the metrological traceability (standards with serial, certificate
 *   and due date); results before and after adjustment (as-found, trims, as-left).
 * - §7.8.6 statement of conformity: the decision rule stated, and which results meet which
 *   specification (`conformityStatement`).
 * - §7.8.8 amendments: revision number, the reason, and that it replaces the earlier revision.
 * Not covered: sampling (§7.8.5, not applicable), opinions and interpretations (§7.8.7), and a
 * recommended calibration interval (§7.8.4.3 allows one only where agreed with the customer).
 * Signatures show name, date-time (UTC) and meaning, as 21 CFR 11.50 asks of signed records.
 * "Shall not be reproduced except in full" in the footer is common practice, not a §7.8 clause.
 */
import PDFDocument from 'pdfkit';
import { certificateProblems, CertificateDataError, type CertificateData } from './certificate-data';
import { firstPageHeader, writeBody } from './certificate-sections';
import { certificateFonts, fitToLatin } from './fonts';
import { COLOR, CONTENT_W, MARGIN, PAGE, Writer, type Doc } from './pdf-writer';

/**
 * Drawn after the body, on every page: the identification at the top of pages after the first,
 * and the footer with the reproduction note and page x of y.
 */
function writePageFurniture(doc: Doc, data: CertificateData): void {
  const range = doc.bufferedPageRange();
  const head = fitToLatin(`Calibration certificate ${data.certificateNumber} · revision ${data.revision} · ${data.instrument.tag}`);
  for (let i = range.start; i < range.start + range.count; i++) {
    doc.switchToPage(i);
    if (i > range.start) {
      doc.font('text').fontSize(8).fillColor(COLOR.muted).text(head, MARGIN.left, MARGIN.top - 20, { width: CONTENT_W, lineBreak: false });
      doc.moveTo(MARGIN.left, MARGIN.top - 8).lineTo(PAGE.width - MARGIN.right, MARGIN.top - 8).lineWidth(0.5).strokeColor(COLOR.rule).stroke();
    }
    // Writing below the bottom margin would make pdfkit start a new page.
    const saved = doc.page.margins.bottom;
    doc.page.margins.bottom = 0;
    const y = PAGE.height - MARGIN.bottom + 18;
    doc.moveTo(MARGIN.left, y).lineTo(PAGE.width - MARGIN.right, y).lineWidth(0.5).strokeColor(COLOR.rule).stroke();
    doc
      .font('mono')
      .fontSize(7.5)
      .fillColor(COLOR.muted)
      .text(fitToLatin(`${data.certificateNumber} · rev ${data.revision}`), MARGIN.left, y + 6, { width: CONTENT_W / 2, lineBreak: false });
    doc.font('text').fontSize(7.5).text(`Page ${i - range.start + 1} of ${range.count}`, MARGIN.left + CONTENT_W / 2, y + 6, { width: CONTENT_W / 2, align: 'right', lineBreak: false });
    doc
      .font('text')
      .fontSize(7)
      .fillColor(COLOR.faint)
      .text('This certificate shall not be reproduced except in full without the written approval of the issuing laboratory.', MARGIN.left, y + 18, {
        width: CONTENT_W,
        lineBreak: false,
      });
    doc.page.margins.bottom = saved;
  }
}


/**
 * Render a calibration certificate to PDF bytes. The output is deterministic for the same data
 * (the PDF's dates come from `issuedAt` or the issue date, never the clock).
 * @throws CertificateDataError when the data cannot make a certificate (see `certificateProblems`)
 */
export async function renderCertificate(data: CertificateData): Promise<Buffer> {
  const problems = certificateProblems(data);
  if (problems.length) throw new CertificateDataError(problems);
  // The PDF's dates come from the record (the approval's time), and pdfkit derives the file ID
  // from them and the info, and names font subsets by registration order: same data, same bytes.
  const issued = new Date(data.issuedAt ?? `${data.issueDate}T00:00:00Z`);
  const doc = new PDFDocument({
    size: 'A4',
    margins: MARGIN,
    bufferPages: true,
    pdfVersion: '1.7',
    lang: 'en',
    displayTitle: true,
    info: {
      Title: fitToLatin(`Calibration certificate ${data.certificateNumber} — ${data.instrument.tag}`),
      Author: fitToLatin(data.laboratory.name),
      Subject: fitToLatin(`Calibration of ${data.instrument.tag}, revision ${data.revision}`),
      Creator: 'Stillpoint',
      Producer: 'Stillpoint',
      CreationDate: issued,
      ModDate: issued,
    },
  });
  const chunks: Buffer[] = [];
  doc.on('data', (c: Buffer) => chunks.push(c));
  const done = new Promise<Buffer>((resolve, reject) => {
    doc.on('end', () => resolve(Buffer.concat(chunks)));
    doc.on('error', reject);
  });
  const fonts = certificateFonts();
  for (const [role, bytes] of Object.entries(fonts)) doc.registerFont(role, bytes);

  const w = new Writer(doc);
  firstPageHeader(w, data);
  writeBody(w, data);
  writePageFurniture(doc, data);
  doc.end();
  return done;
}

