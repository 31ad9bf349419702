// A file or option that cannot be analysed as asked (too short, band above its Nyquist, span outside the file):
// exit 2 with a message that names the fix.
export class AnalysisInputError extends Error {
  override readonly name = 'AnalysisInputError';
  readonly exitCode = 2;
}
