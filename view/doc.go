// Package view is what each command shows: its result as one model, with
// units in every key (the JSON a script reads), and the renderings of that
// model — the text a rider reads and the athlete's page, which embeds the
// model as it is, so the page equals --json by construction.
//
// A model is built from the pipeline's results (estimate.Report,
// estimate.SeasonReport) by its New function and rendered by its Render
// function; cmd/sustain only parses flags, runs the pipeline and picks the
// rendering.
package view
