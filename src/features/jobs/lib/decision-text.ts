/**
 * The decision step's advice, following where the job stands: before an as-left run, after an
 * as-left run in tolerance, and after one still out of tolerance. Decisions are the API's
 * (`overallDecision` of the latest complete run of each kind), never recomputed here.
 */
export function decisionAdvice(asFound: string | undefined, asLeft: string | undefined): string {
  const foundPass = asFound === 'pass';
  if (asLeft === undefined) {
    return foundPass
      ? 'Found in tolerance: no adjustment is needed. Trim only if the site asks for it; an as-left run is then required.'
      : 'Found out of tolerance (or conditional): trim the transmitter, then run the as-left pass.';
  }
  if (asLeft === 'pass') {
    return foundPass
      ? 'Found in tolerance and left in tolerance: the as-left pass is done. Return the loop to service, then submit.'
      : 'Found out of tolerance; after the trims the as-left pass is in tolerance. Return the loop to service, then submit.';
  }
  return 'The as-left pass is not in tolerance (or only conditionally): trim again and repeat the as-left run; if it cannot be brought into tolerance, say so in the job notes for the lead.';
}
