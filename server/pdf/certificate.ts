import crypto from 'node:crypto';
import PDFDocument from 'pdfkit';
import QRCode from 'qrcode';
import { openSans } from './fonts';

/**
 * The certificate PDF: our own design on A4 landscape. A dark plume-green band on the left carries
 * the mark, the QR code to the public check and the number; the right holds the company line or logo,
 * the holder, the area, the methods, the dates and the caution.
 *
 * Deterministic: the same input gives the same bytes (fixed info dates from the issue date, the file
 * ID derived from them, fonts subset in a fixed order). The stored bytes remain the truth; this only
 * means a re-render can be compared with them.
 */
export interface CertificatePdfInput {
  number: string;
  holderName: string;
  areaName: string;
  methods: string[];
  /** Calendar dates, YYYY-MM-DD. */
  issuedOn: string;
  expiresOn: string;
  /** Printed as a neutral text line when there is no logo; omitted when null. */
  companyName: string | null;
  logo?: { mime: string; bytes: Buffer } | null;
  /** `${appUrl}/verify/<number>`; encoded in the QR code and printed beneath it. */
  verifyUrl: string;
}

export const CERTIFICATE_CAUTION =
  'This certificate records training on Plumewright; it does not replace the method text, agency requirements, accreditation or licensed professional judgement.';


const COLOUR = {
  band: '#133e3c',
  bandText: '#ffffff',
  bandMuted: '#a8ddd7',
  accent: '#175d59',
  ember: '#f0a02a',
  emberText: '#8f5410',
  ink: '#182024',
  muted: '#4c5a61',
  rule: '#dce2e4',
  tint: '#eef8f7',
};

const PAGE = { width: 841.89, height: 595.28 };
const BAND = 214;
const CONTENT_X = BAND + 50;
const CONTENT_W = PAGE.width - CONTENT_X - 50;
const MONTHS = ['January', 'February', 'March', 'April', 'May', 'June', 'July', 'August', 'September', 'October', 'November', 'December'];

/** 2026-03-14 → "14 March 2026": day, month name, year, so no reader mistakes the order. */
export function formatCertificateDate(isoDate: string): string {
  const [y, m, d] = isoDate.split('-').map(Number);
  return `${d} ${MONTHS[m - 1]} ${y}`;
}

const utcMidnight = (isoDate: string) => new Date(`${isoDate}T00:00:00Z`);

/** Font size at which `text` fits `width`, from `max` down to `min`. */
function fittedSize(doc: PDFKit.PDFDocument, font: string, text: string, width: number, max: number, min: number) {
  doc.font(font);
  let size = max;
  while (size > min && doc.fontSize(size).widthOfString(text) > width) size -= 1;
  return size;
}

function drawMark(doc: PDFKit.PDFDocument, x: number, y: number, size: number) {
  doc.save().translate(x, y).scale(size / 32);
  doc.roundedRect(0, 0, 32, 32, 8).fill(COLOUR.accent);
  doc.path('M11 27V14h5v13').fill('#d3eeeb');
  doc.path('M13.5 12c0-4 3-5.5 6-5.5s5 2 5 4.2c0 1.8-1.4 3-3.1 3-1.4 0-2.4-1-2.4-2.2').lineWidth(2.2).lineCap('round').stroke('#f8bb4e');
  doc.moveTo(8, 27).lineTo(24, 27).lineWidth(2).lineCap('round').stroke('#d3eeeb');
  doc.restore();
}

/** Faint rising curves in the band: the plume motif, kept behind everything else. */
function drawPlumeLines(doc: PDFKit.PDFDocument) {
  doc.save();
  doc.rect(0, 0, BAND, PAGE.height).clip();
  doc.lineWidth(1.2).strokeOpacity(0.13);
  for (let i = 0; i < 6; i++) {
    const x0 = 22 + i * 30;
    doc.moveTo(x0, PAGE.height).bezierCurveTo(x0 + 40, 430, x0 - 30, 300, x0 + 60, 150 - i * 12).stroke(COLOUR.bandMuted);
  }
  doc.restore();
}

function labelText(doc: PDFKit.PDFDocument, text: string, x: number, y: number, colour: string) {
  doc.font('semibold').fontSize(7.5).fillColor(colour).text(text.toUpperCase(), x, y, { characterSpacing: 1.4, lineBreak: false });
}

/** Renders one certificate. Time it with `timeCertificateRender` (the benchmark does). */
export async function renderCertificatePdf(input: CertificatePdfInput): Promise<Buffer> {
  const qrPng = await QRCode.toBuffer(input.verifyUrl, {
    type: 'png',
    errorCorrectionLevel: 'M',
    margin: 0,
    scale: 6,
    color: { dark: '#133e3cff', light: '#ffffffff' },
  });

  const issued = utcMidnight(input.issuedOn);
  const doc = new PDFDocument({
    size: 'A4',
    layout: 'landscape',
    margin: 0,
    autoFirstPage: true,
    compress: true,
    pdfVersion: '1.7',
    lang: 'en',
    displayTitle: true,
    info: {
      Title: `Plumewright certificate ${input.number}`,
      Author: 'Plumewright',
      Subject: `${input.areaName}: ${input.holderName}`,
      Keywords: input.number,
      Creator: 'Plumewright',
      Producer: 'Plumewright certificate service (PDFKit)',
      CreationDate: issued,
      ModDate: issued,
    },
  });
  const chunks: Buffer[] = [];
  doc.on('data', (chunk: Buffer) => chunks.push(chunk));
  const finished = new Promise<Buffer>((resolve, reject) => {
    doc.on('end', () => resolve(Buffer.concat(chunks)));
    doc.on('error', reject);
  });

  const fonts = openSans();
  doc.registerFont('regular', fonts.regular);
  doc.registerFont('semibold', fonts.semibold);
  doc.registerFont('bold', fonts.bold);

  // Left band: mark, QR code, number.
  doc.rect(0, 0, BAND, PAGE.height).fill(COLOUR.band);
  drawPlumeLines(doc);
  doc.rect(BAND, 0, 5, PAGE.height).fill(COLOUR.ember);
  drawMark(doc, 32, 36, 34);
  doc.font('bold').fontSize(17).fillColor(COLOUR.bandText).text('Plumewright', 74, 42, { lineBreak: false });
  doc.font('regular').fontSize(8).fillColor(COLOUR.bandMuted).text('Training for source-testing crews', 32, 82, { width: BAND - 50, lineBreak: false });

  const qrSize = 128;
  const qrX = (BAND - qrSize) / 2;
  const qrY = 200;
  doc.roundedRect(qrX - 12, qrY - 12, qrSize + 24, qrSize + 24, 10).fill('#ffffff');
  doc.image(qrPng, qrX, qrY, { width: qrSize, height: qrSize });
  doc.font('semibold').fontSize(9).fillColor(COLOUR.bandText).text('Scan to check this certificate', 24, qrY + qrSize + 24, { width: BAND - 48, align: 'center' });
  doc.font('regular').fontSize(6.5).fillColor(COLOUR.bandMuted).text(input.verifyUrl, 20, qrY + qrSize + 40, { width: BAND - 40, align: 'center' });

  labelText(doc, 'Certificate number', 32, PAGE.height - 92, COLOUR.bandMuted);
  const numberSize = fittedSize(doc, 'bold', input.number, BAND - 56, 15, 9);
  doc.font('bold').fontSize(numberSize).fillColor(COLOUR.bandText).text(input.number, 32, PAGE.height - 76, { lineBreak: false, characterSpacing: 0.5 });

  // Right: company line or logo.
  let y = 44;
  let logoDrawn = false;
  if (input.logo) {
    try {
      doc.image(input.logo.bytes, CONTENT_X, y, { fit: [170, 54] });
      logoDrawn = true;
    } catch {
      // An unreadable logo never blocks a certificate: the text line below stands in for it.
    }
  }
  if (!logoDrawn && input.companyName) {
    doc.font('semibold').fontSize(11).fillColor(COLOUR.muted).text(input.companyName, CONTENT_X, y + 6, { width: CONTENT_W - 150, lineBreak: false, ellipsis: true });
  }
  const tag = 'TRAINING RECORD';
  doc.font('semibold').fontSize(7.5);
  const tagWidth = doc.widthOfString(tag, { characterSpacing: 1.4 });
  labelText(doc, tag, CONTENT_X + CONTENT_W - tagWidth, y + 8, COLOUR.muted);

  y = 132;
  labelText(doc, 'Method competency certificate', CONTENT_X, y, COLOUR.emberText);
  doc.rect(CONTENT_X, y + 16, 44, 3).fill(COLOUR.ember);

  y += 36;
  doc.font('regular').fontSize(11).fillColor(COLOUR.muted).text('Awarded to', CONTENT_X, y, { lineBreak: false });
  const nameSize = fittedSize(doc, 'bold', input.holderName, CONTENT_W, 32, 16);
  doc.font('bold').fontSize(nameSize).fillColor(COLOUR.ink).text(input.holderName, CONTENT_X, y + 16, { width: CONTENT_W, lineBreak: false });

  y += 16 + nameSize * 1.45 + 8;
  doc.font('regular').fontSize(11).fillColor(COLOUR.muted).text('for passing the Plumewright examination in', CONTENT_X, y, { lineBreak: false });
  const areaSize = fittedSize(doc, 'semibold', input.areaName, CONTENT_W, 22, 13);
  doc.font('semibold').fontSize(areaSize).fillColor(COLOUR.accent).text(input.areaName, CONTENT_X, y + 16, { width: CONTENT_W, lineBreak: false });

  y += 16 + areaSize * 1.45 + 12;
  labelText(doc, 'Methods covered', CONTENT_X, y, COLOUR.muted);
  doc.font('regular').fontSize(10.5).fillColor(COLOUR.ink).text(input.methods.join(' · ') || '—', CONTENT_X, y + 13, { width: CONTENT_W, lineGap: 1 });

  // Dates in two tinted tiles.
  const tileY = 388;
  const tileW = (CONTENT_W - 16) / 2;
  const tiles: [string, string][] = [
    ['Issued', formatCertificateDate(input.issuedOn)],
    ['Valid through', formatCertificateDate(input.expiresOn)],
  ];
  tiles.forEach(([label, value], i) => {
    const x = CONTENT_X + i * (tileW + 16);
    doc.roundedRect(x, tileY, tileW, 58, 8).fill(COLOUR.tint);
    labelText(doc, label, x + 16, tileY + 12, COLOUR.muted);
    doc.font('semibold').fontSize(15).fillColor(COLOUR.ink).text(value, x + 16, tileY + 27, { lineBreak: false });
  });

  doc.font('regular').fontSize(8.5).fillColor(COLOUR.muted).text(
    'A certificate can be renewed, replaced or revoked after it is printed. Before relying on it, check its current status with the QR code or at the address beside it.',
    CONTENT_X, tileY + 74, { width: CONTENT_W, lineGap: 1 },
  );

  doc.moveTo(CONTENT_X, PAGE.height - 62).lineTo(CONTENT_X + CONTENT_W, PAGE.height - 62).lineWidth(0.75).stroke(COLOUR.rule);
  doc.font('regular').fontSize(8).fillColor(COLOUR.muted).text(CERTIFICATE_CAUTION, CONTENT_X, PAGE.height - 52, { width: CONTENT_W, lineGap: 1 });

  doc.end();
  return finished;
}

export const sha256Hex = (bytes: Buffer) => crypto.createHash('sha256').update(bytes).digest('hex');

/** Invented sample data for the benchmark and for previews; no real person or company. */
export function sampleCertificateInput(overrides: Partial<CertificatePdfInput> = {}): CertificatePdfInput {
  const number = overrides.number ?? 'PW-7K3M-Q9TD-R4E';
  return {
    number,
    holderName: 'Juniper Vasquez-Holm',
    areaName: 'Particulate sampling',
    methods: ['Method 5'],
    issuedOn: '2026-03-14',
    expiresOn: '2029-03-14',
    companyName: 'Bramblewick Source Testing',
    logo: null,
    verifyUrl: `http://127.0.0.1:3000/verify/${number}`,
    ...overrides,
  };
}

/** One timed render for the benchmark: milliseconds and the size of the file. */
export async function timeCertificateRender(input: CertificatePdfInput = sampleCertificateInput()): Promise<{ ms: number; bytes: number }> {
  const started = performance.now();
  const pdf = await renderCertificatePdf(input);
  return { ms: performance.now() - started, bytes: pdf.length };
}
