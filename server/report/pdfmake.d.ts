/** The part of pdfmake's server API we use (the package ships no type declarations). */
declare module 'pdfmake' {
  interface OutputDocument {
    getBuffer(): Promise<Buffer>;
  }
  interface PdfMake {
    setFonts(fonts: Record<string, Record<'normal' | 'bold' | 'italics' | 'bolditalics', string>>): void;
    setUrlAccessPolicy(allow: (url: string) => boolean): void;
    setLocalAccessPolicy(allow: (path: string) => boolean): void;
    createPdf(doc: object, options?: object): OutputDocument;
  }
  const pdfmake: PdfMake;
  export = pdfmake;
}
