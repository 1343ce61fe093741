// Package sequence processes an analytical run: blanks, check standards
// and samples in the order they were measured, from a run sheet (a
// standards sheet with the columns order, role and, optionally, time).
//
// Each check standard is judged on its own against its known composition
// with verify's acceptance limits (validate.Assess: recovery within the
// window for every compound it holds, |found| <= LOQ for those it does
// not). A sample is valid only when the checks that bracket it, the
// nearest check before and after it in run order, both pass; a sample
// with no check before or after it is unbracketed, and not valid. The
// drift of the blanks' apparent concentrations and of the checks'
// recoveries across the run is the slope of an ordinary least-squares
// line against the position in the run (or hours, when the sheet gives
// times), with its standard error. When the blank subtracted from checks
// and samples is the mean of the blank rows, each blank row is solved as
// measured, without it (see Options.Model).
package sequence
