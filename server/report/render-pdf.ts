/**
 * Renders a document definition to PDF bytes with pdfmake, in this process and without a browser. Fonts are the
 * Roboto TTF files pdfmake ships; no URL is ever fetched and no file outside those fonts is read.
 */
import { createRequire } from 'node:module';
import { dirname, join } from 'node:path';
import pdfmake from 'pdfmake';
import type { PdfDocument } from './case-report';

const fontDir = dirname(createRequire(__filename).resolve('pdfmake/fonts/Roboto/Roboto-Regular.ttf'));

pdfmake.setFonts({
  Roboto: {
    normal: join(fontDir, 'Roboto-Regular.ttf'),
    bold: join(fontDir, 'Roboto-Medium.ttf'),
    italics: join(fontDir, 'Roboto-Italic.ttf'),
    bolditalics: join(fontDir, 'Roboto-MediumItalic.ttf'),
  },
});
pdfmake.setUrlAccessPolicy(() => false);
pdfmake.setLocalAccessPolicy((path) => path.startsWith(fontDir));

export async function renderPdf(doc: PdfDocument): Promise<Buffer> {
  return pdfmake.createPdf(doc).getBuffer();
}
