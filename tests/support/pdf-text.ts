/**
 * The text of a PDF as a reader's copy-paste would give it, from Debian's pdftotext (poppler-utils; `npm test`
 * installs it like chromium). Runs of whitespace are folded to one space so phrases match across line breaks.
 */
import { execFileSync } from 'node:child_process';

export function pdfText(pdf: Buffer): string {
  return execFileSync('pdftotext', ['-enc', 'UTF-8', '-', '-'], { input: pdf, maxBuffer: 64 * 1024 * 1024 }).toString('utf8').replace(/\s+/g, ' ');
}
