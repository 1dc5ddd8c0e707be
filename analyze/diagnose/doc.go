// Package diagnose turns an analysis into findings: what is wrong with the circuit (or the
// capture), in numbers, and what to change, with the model's prediction of that change.
//
// Every finding has a short kebab-case code of our own, a severity ("info", "warn" or
// "fault"), a one-sentence message with the numbers in it, a suggestion, and the numbers
// themselves in a map whose keys carry their units. The codes are listed in Codes and in
// DEVELOPERS.md ("Finding codes"); a healthy capture produces no warn or fault finding.
package diagnose
