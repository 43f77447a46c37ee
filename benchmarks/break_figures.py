"""Break each reported figure on purpose, one at a time, and check that a test fails.

Each entry replaces one line of the package (x2, a wrong log base, ...), runs
the test suite (without the tutorials), restores the line, and prints whether
a test caught it. Run from the repository root (the names given select the
entries whose name contains one of them):

    python benchmarks/break_figures.py [NAME ...]
"""

import os
import pathlib
import subprocess
import sys
breaks = [
 ("group_delay x2", "src/gainshape/shaping/measure.py", "group_delay=group_delay(response, half_pow,", "group_delay=2 * group_delay(response, half_pow,"),
 ("stop-band floor: grid only (a peak between grid points)", "src/gainshape/shaping/stopbands.py", "    top = refined_max(freqs, np.where(where, realized, 0.0), response, allowed)", "    top = float(np.where(where, realized, 0.0).max())"),
 ("stop-band floor ends left out", "src/gainshape/shaping/stopbands.py", "            top = max(top, float(response(np.array([end]))[0]))", "            pass"),
 ("max deviation: grid only", "src/gainshape/shaping/stopbands.py", "    best = max(best, float(fine_values.max()))", "    return best"),
 ("stop-band attenuation 10 log10", "src/gainshape/shaping/stopbands.py", "out.append(StopBand(a, b, -20 * float(np.log10(max(top, 1e-300))), kind, low, high))", "out.append(StopBand(a, b, -10 * float(np.log10(max(top, 1e-300))), kind, low, high))"),
 ("stop range: from the edge (the old fault)", "src/gainshape/shaping/stopbands.py", "    return float(low), float(high), max(top, refined_max(", "    return float(a), float(b), max(top, refined_max("),
 ("stop range: ends swapped", "src/gainshape/shaping/stopbands.py", "out.append(StopBand(a, b, -20 * float(np.log10(max(top, 1e-300))), kind, low, high))", "out.append(StopBand(a, b, -20 * float(np.log10(max(top, 1e-300))), kind, high, low))"),
 ("stop range: no refinement inside", "src/gainshape/shaping/stopbands.py", "    return float(low), float(high), max(top, refined_max(freqs, run, response, inside))", "    return float(low), float(high), top"),
 ("stop words: 'above' from the wrong end", "src/gainshape/shaping/words.py", "        return f\"above {hz_words(low, 3, 'up')} Hz\"", "        return f\"above {hz_words(low, 3, 'down')} Hz\""),
 ("stop words: attenuation rounded to nearest", "src/gainshape/shaping/words.py", "    return f\"{np.floor(db * 10 + 1e-9) / 10:.1f}\"", "    return f\"{db:.1f}\""),
 ("undershoot in fraction, not %", "src/gainshape/shaping/timing.py", "        under = 100 * -float(step[k]) if step[k] < -_ROUND_OFF else 0.0", "        under = -float(step[k]) if step[k] < -_ROUND_OFF else 0.0"),
 ("undershoot: whole step response (pre-response mixed in)", "src/gainshape/shaping/timing.py", "        k = np.flatnonzero(after)[np.argmin(step[after])]", "        k = int(np.argmin(step))"),
 ("pre-response: stated for causal kernels too", "src/gainshape/shaping/timing.py", "        if not causal:\n            early", "        if True:\n            early"),
 ("pre-response onset: last, not first", "src/gainshape/shaping/timing.py", "            figures[\"pre_response_s\"] = float(-times[early[0]]) if early.size else 0.0", "            figures[\"pre_response_s\"] = float(-times[early[-1]]) if early.size else 0.0"),
 ("brief: roll-offs in the wrong order", "src/gainshape/record/methods.py", "    slopes = list(dict.fromkeys(f\"{s:.3g}\" for _, _, _, s in edges if s is not None))", "    slopes = list(dict.fromkeys(f\"{s:.3g}\" for _, _, _, s in edges[::-1] if s is not None))"),
 ("brief: half-power of the other edge", "src/gainshape/record/methods.py", "    half_power = [hp for _, _, hp, _ in edges if hp is not None]", "    half_power = [hp for _, _, hp, _ in edges[::-1] if hp is not None]"),
 ("brief: notch range around the true centre", "src/gainshape/record/methods.py", "               for b in notches for c in [float(hz_words(notch_centre(b), 4))])", "               for b in notches for c in [notch_centre(b)])"),
 ("BIDS: stop range rounded outward", "src/gainshape/record/bids.py", "[round_sig_toward(b[\"attenuated_low\"], 4, \"up\"),", "[round_sig_toward(b[\"attenuated_low\"], 4, \"down\"),"),
 ("BIDS: attenuation rounded to nearest", "src/gainshape/record/bids.py", "    out[\"least attenuation (dB)\"] = round_down(b[\"attenuation_db\"], 1)", "    out[\"least attenuation (dB)\"] = round_sig(b[\"attenuation_db\"], 3)"),
 ("BIDS: undershoot key holds the pre-response", "src/gainshape/record/bids.py", "    out[\"high-pass step undershoot after the step (% of step)\"] = round_sig(t[\"undershoot_pct\"], 3)", "    out[\"high-pass step undershoot after the step (% of step)\"] = round_sig(t.get(\"pre_response_pct\") or 0.0, 3)"),
 ("passband ripple x2", "src/gainshape/shaping/measure.py", "ripple = float(np.max(np.abs(ratio_db)))", "ripple = 2 * float(np.max(np.abs(ratio_db)))"),
 ("high-pass settling x3", "src/gainshape/shaping/timing.py", "settling = float(times[late[-1]]) if late.size else 0.0", "settling = 3 * float(times[late[-1]]) if late.size else 0.0"),
 ("low-pass decay x3", "src/gainshape/shaping/timing.py", "decay = float(times[loud[-1]]) if loud.size else 0.0", "decay = 3 * float(times[loud[-1]]) if loud.size else 0.0"),
 ("BIDS half-amplitude x2", "src/gainshape/record/bids.py", 'edges[f"{name} half-amplitude cutoff (Hz)"] = round_sig(hz, 4)', 'edges[f"{name} half-amplitude cutoff (Hz)"] = round_sig(2 * hz, 4)'),
 ("audit ringing_s x5", "src/gainshape/examining/audit.py", '"ringing_s": float(t[error[-1]] - t[i_offset])', '"ringing_s": 5 * float(t[error[-1]] - t[i_offset])'),
 ("audit latency_shift_ms x2", "src/gainshape/examining/audit.py", '"latency_shift_ms": 1000 * (t[j_peak] - t[i_peak]),', '"latency_shift_ms": 2000 * (t[j_peak] - t[i_peak]),'),
 ("audit peak_change_pct x1.5", "src/gainshape/examining/audit.py", '"peak_change_pct": 100 * (ys[j_peak] - peak) / peak,', '"peak_change_pct": 150 * (ys[j_peak] - peak) / peak,'),
 ("audit onset_shift_ms x3", "src/gainshape/examining/audit.py", '"onset_shift_ms": 1000 * (t[j_onset] - t[i_onset]),', '"onset_shift_ms": 3000 * (t[j_onset] - t[i_onset]),'),
 ("plot_audit marker height", "src/gainshape/showing/waveform_plots.py", "[peak * (1 + float(row.peak_change_pct) / 100)],", "[peak * (1 + float(row.peak_change_pct) / 50)],"),
 ("line height_db x2", "src/gainshape/examining/lines.py", '"height_db": 10 * np.log10(1.0 + top)', '"height_db": 20 * np.log10(1.0 + top)'),
 ("line width x2", "src/gainshape/examining/lines.py", '    return {"frequency": frequency, "height_db"', '    width = 2 * width\n    return {"frequency": frequency, "height_db"'),
 ("line frequency half a bin off", "src/gainshape/examining/lines.py", "frequency = freqs[peak] + shift * df", "frequency = freqs[peak] + (shift + 0.5) * df"),
 ("line background: median, not mean", "src/gainshape/examining/lines.py", "return median / (stats.chi2.median(dof) / dof)", "return median"),
 ("line reasons: height x2", "src/gainshape/examining/notches.py", '{float(line.height_db):.1f} dB above', '{2 * float(line.height_db):.1f} dB above'),
 ("plot_lines label height x2", "src/gainshape/showing/spectrum_plots.py", 'Hz\\n+{h:.1f} dB"', 'Hz\\n+{2 * h:.1f} dB"'),
 ("editor preview spectrum 20 log10", "src/gainshape/showing/edits.py", "    return 10 * np.log10(np.maximum(power, np.finfo(float).tiny))", "    return 20 * np.log10(np.maximum(power, np.finfo(float).tiny))"),
 ("editor deviation sign", "src/gainshape/showing/edits.py", '"deviation": numbers_of(got - requested)', '"deviation": numbers_of(requested - got)'),
 ("editor step response x2", "src/gainshape/showing/edits.py", '"step": trace_of(times, np.cumsum(kernel)),', '"step": trace_of(times, 2 * np.cumsum(kernel)),'),
 ("editor code line 4 digits", "src/gainshape/showing/edits.py", 'freqs = ", ".join(f"{f:.12g}" for f, _ in points)', 'freqs = ", ".join(f"{f:.3g}" for f, _ in points)'),
 ("editor rounding 3 digits", "src/gainshape/showing/edits.py", "    scale = 10.0 ** (6 - magnitude)", "    scale = 10.0 ** (2 - magnitude)"),
 ("rates: aliasing bound x2", "src/gainshape/shaping/rates.py", "    return float(np.max(slow * own * (1.0 - own)))", "    return 2 * float(np.max(slow * own * (1.0 - own)))"),
 ("rates: equivalent kernel's slow part x1.01", "src/gainshape/shaping/rates.py", "slow = slow.ravel()[: m * (q.taps.size - 1) + smoothing.size]", "slow = 1.01 * slow.ravel()[: m * (q.taps.size - 1) + smoothing.size]"),
 ("rates: interpolation weights reversed", "src/gainshape/shaping/rates.py", "    return np.stack([1.0 - r, r])", "    return np.stack([r, 1.0 - r])"),
 ("methods: reduced rate x2", "src/gainshape/shaping/words.py", "f\"{r['reduced_rate_hz']:.4g} Hz (decimation by", "f\"{2 * r['reduced_rate_hz']:.4g} Hz (decimation by"),
 ("summary: split x2", "src/gainshape/shaping/words.py", "    return (f\"two: below {r['split_hz']:.3g} Hz", "    return (f\"two: below {2 * r['split_hz']:.3g} Hz"),
 ("engine: kernel folded onto one sample less", "src/gainshape/filtering/engine.py", "    at = (np.arange(design.taps.size) - design.offset + half) % period", "    at = (np.arange(design.taps.size) - design.offset + half) % (period - 1)"),
 ("BIDS reduced rate x2", "src/gainshape/record/bids.py", 'two.get("reduced_rate_hz"), 6)', '2 * two.get("reduced_rate_hz"), 6)'),
 ("history table roll-off x2", "src/gainshape/record/steps.py", 'f"{slope:.1f}" for _, _, _, slope in passband if slope is not None', 'f"{2 * slope:.1f}" for _, _, _, slope in passband if slope is not None'),
 ("group delay: averaged from 0 Hz (wrong range)", "src/gainshape/shaping/timing.py", "    intervals = [(a, b) for a, b in zip(ends[::2], ends[1::2]) if b > a]", "    intervals = [(0.0, b) for a, b in zip(ends[::2], ends[1::2]) if b > a]"),
 ("group delay: in samples, not seconds (units)", "src/gainshape/shaping/timing.py", "    return (samples - response.offset) / response.sfreq", "    return samples - response.offset"),
 ("BIDS: half-power of the half-amplitude field (swapped fields)", "src/gainshape/record/bids.py", "            edges[f\"{name} half-power cutoff (Hz)\"] = round_sig(half_power, 4)", "            edges[f\"{name} half-power cutoff (Hz)\"] = round_sig(hz, 4)"),
 ("summary: kernel samples one short (wrong count)", "src/gainshape/shaping/filter_design.py", "(\"kernel length\", f\"{c.length:.4g} s ({self.taps.size} samples)\"),", "(\"kernel length\", f\"{c.length:.4g} s ({self.taps.size - 1} samples)\"),"),
 ("study summary: labels shifted by one (misaligned labels)", "src/gainshape/studies/report.py", "             for (row, extras), (_, _, entities) in zip(results, found)", "             for (row, extras), (_, _, entities) in zip(results, found[1:] + found[:1])"),
 ("Epochs map: mean of dB, not of power (wrong level)", "src/gainshape/examining/summaries.py", "    return (10 * np.log10(after / before)).transpose(\"channel\", \"band\").values", "    return ds.change_db.mean(\"epoch\").transpose(\"channel\", \"band\").values"),
 ("line width: at a quarter of the peak (wrong level)", "src/gainshape/examining/lines.py", "    half = top / 2.0", "    half = top / 4.0"),
 ("editor: after spectrum of the unfiltered rows (swapped)", "src/gainshape/showing/drawing.py", "        after_rows = filter_array(self.rows, realized, words=self.words)", "        after_rows = self.rows"),
 ("audit pre-response: % of the filtered peak (wrong denominator)", "src/gainshape/examining/audit.py", "        \"pre_response_pct\": 100 * before / peak,", "        \"pre_response_pct\": 100 * before / ys[j_peak],"),
 ("audit pre-response: in % where data units are named (units)", "src/gainshape/examining/audit.py", "        \"pre_response\": before,", "        \"pre_response\": 100 * before / peak,"),
 ("failed row: previous output not named", "src/gainshape/studies/task.py", "    return output, f\"previous output kept, from {when}; {words}\"", "    return None, words"),
 ("truncation: marker check off by the whole file", "src/gainshape/studies/task.py", "        if positions and max(positions) > raw.n_times:", "        if positions and max(positions) > 2 * raw.n_times:"),
 ("compare: peak change against the candidate's own peak (wrong denominator)", "src/gainshape/examining/compare.py", "         \"peak_change_pct\": (dims, 100 * sign * (got[\"peak\"] - base[\"peak\"]) / size),", "         \"peak_change_pct\": (dims, 100 * sign * (got[\"peak\"] - base[\"peak\"]) / np.abs(got[\"peak\"])),"),
 ("compare: latency in s where ms is named (units)", "src/gainshape/examining/compare.py", "         \"latency_ms\": (dims, 1000 * got[\"latency\"]),", "         \"latency_ms\": (dims, got[\"latency\"]),"),
 ("compare: deflections before and after swapped (swapped fields)", "src/gainshape/examining/compare.py", "         \"deflection_before\": (dims, got[\"before\"]),", "         \"deflection_before\": (dims, got[\"after\"]),"),
 ("compare: onset at 40 % (wrong level)", "src/gainshape/examining/components.py", "ONSET_FRACTION = 0.5  # the onset rule: the waveform reaches this fraction of the reference's peak", "ONSET_FRACTION = 0.4  # the onset rule: the waveform reaches this fraction of the reference's peak"),
 ("compare: onset at the candidate's own peak (wrong level)", "src/gainshape/examining/components.py", "            \"onset\": _onset(times, sign * wave, k, int(inside[0]), level),", "            \"onset\": _onset(times, sign * wave, k, int(inside[0]), sign * peak),"),
 ("compare: peak change sign ignoring polarity", "src/gainshape/examining/compare.py", "    sign = np.array([1.0 if chosen[name][2] == \"+\" else -1.0 for name in names])[:, None]", "    sign = np.ones((len(names), 1))"),
 ("compare: waveforms one sample late (misaligned)", "src/gainshape/examining/compare.py", "                    wave = runs[label][\"averages\"][k, ch] * scale", "                    wave = np.roll(runs[label][\"averages\"][k, ch], 1) * scale"),
 ("compare: mean over the whole record (wrong range)", "src/gainshape/examining/components.py", "    return {\"peak\": peak, \"latency\": float(times[k]), \"mean\": float(wave[inside].mean()),", "    return {\"peak\": peak, \"latency\": float(times[k]), \"mean\": float(wave.mean()),"),
 ("compare: the reference difference wave read 12 samples off (misaligned)", "src/gainshape/examining/compare.py", "        base.append(_signed_extreme(ref.values[..., inside]))", "        base.append(_signed_extreme(ref.values[..., np.roll(inside, 12)]))"),
 ("compare: high-pass caution from 0.5 Hz (wrong threshold)", "src/gainshape/examining/cautions.py", "HIGH_PASS_CAUTION_HZ = 0.3  # at or above: artefactual opposite-polarity effects reported", "HIGH_PASS_CAUTION_HZ = 0.5  # at or above: artefactual opposite-polarity effects reported"),
 ("compare: cautions read every channel (no expressed-channel mask)", "src/gainshape/examining/cautions.py", "EXPRESSED_SHARE = 0.5  # cautions read the channels where a component is at least half its largest", "EXPRESSED_SHARE = 0.0  # cautions read the channels where a component is at least half its largest"),
 ("compare: the methods sentence drops the reference", "src/gainshape/record/methods.py", "            f\"{choice.get('data', '?')} and measured against {choice.get('reference', '?')}{on}.\")", "            f\"{choice.get('data', '?')}{on}.\")"),
]
chosen = [b for b in breaks if not sys.argv[1:] or any(n in b[0] for n in sys.argv[1:])]
caught = 0
for name, path, old, new in chosen:
    p = pathlib.Path(path); text = p.read_text()
    assert text.count(old) == 1, name
    p.write_text(text.replace(old, new))
    try:
        r = subprocess.run([sys.executable, "-m", "pytest", "-q", "-x", "-p", "no:cacheprovider",
                            *os.environ.get("BREAK_TESTS", "tests src/gainshape").split(),
                            "--deselect", "tests/test_tutorials.py"],
                           capture_output=True, text=True, env={**os.environ, "MPLBACKEND": "Agg"})
    finally:
        p.write_text(text)
    failed = [l for l in r.stdout.splitlines() if l.startswith("FAILED")]
    ok = r.returncode != 0
    caught += ok
    print(f"{'CAUGHT' if ok else 'MISSED'}  {name}: {failed[:1]}", flush=True)
print(f"{caught}/{len(chosen)} caught")
