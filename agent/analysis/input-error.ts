// A file or option that cannot be analysed as asked (too short, band above its Nyquist, span outside the file):
// exit 2 with a message that names the fix.
import { FloorlineError } from '../errors.ts';
export class AnalysisInputError extends FloorlineError {
  override readonly name = 'AnalysisInputError';
  constructor(message: string) {
    super('ANALYSIS_INPUT', message);
  }
}
