/** The caution every report and summary carries. */
export const CAUTION =
  'Hindcast outputs are estimates for analysis and review. They are not for navigation or safety-of-life use. ' +
  'Survey deliverables must be checked against control and against the local rules of licensed practice.';
