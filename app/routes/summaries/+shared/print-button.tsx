// "Print or save as PDF": the browser's own print dialog (Save as PDF is one of its printers).
export function PrintButton() {
  return (
    <button type="button" className="btn no-print" onClick={() => window.print()}>
      Print or save as PDF
    </button>
  );
}
