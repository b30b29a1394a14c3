#!/usr/bin/env python3
"""mutate.py — does the suite catch plausible one-line bugs?  (Not run by `make check`.)

Copies the tree (src, tests, materials, examples, Makefile, .ci) into build/mutant/tree,
then for each mutant in MUTANTS: restores every file, applies ONE literal replacement
(the first occurrence of OLD in FILE becomes NEW; the script stops if OLD is missing),
rebuilds with `make -j2` inside the copy and runs every build/tests/test_* program of the
copy (the C suite, ~35 s; `--shell` also runs tests/cli_test.sh and tests/workflow_cli.sh).
A mutant is "killed" when a test program fails (the table names the first; `--all` runs
every program and names all), "build" when it does not compile.

  python3 tests/mutate.py                 # every mutant; table on stdout and in
                                          # build/mutant/results.tsv
  python3 tests/mutate.py json_ec csv_lv  # only the mutants with these ids
  python3 tests/mutate.py --list          # ids and descriptions
  --no-baseline: skip the check that the unmutated copy passes
  --skip=test_NAME: leave one test program out (repeatable)

Run from the project root.  The worktree itself is never modified.
"""
import os
import shutil
import subprocess
import sys
import time

ROOT = os.path.abspath(os.path.join(os.path.dirname(__file__), ".."))
# MUTATE_DIR=build/mutant2 runs a second campaign beside the first (its own copy)
WORK = os.path.join(ROOT, os.environ.get("MUTATE_DIR", "build/mutant"))
TREE = os.path.join(WORK, "tree")
# a snapshot of the worktree taken when the run starts: editing the worktree meanwhile does
# not change what the run tests
BASE = os.path.join(WORK, "base")
# the command and every test program, nothing else (`make check` would also run the suite)
BUILD = ["sh", "-c", "make -j" + os.environ.get("MUTATE_JOBS", "2") + " build/epiwell "
         "$(ls tests/test_*.c | sed 's|tests/\\(.*\\)\\.c|build/tests/\\1|')"]
COPY = ["src", "tests", "materials", "examples", "Makefile", ".ci"]

# (id, file, old, new, what the bug is)
MUTANTS = [
    # wurtzite nitrides (test_nitride.c)
    ("json_pol", "src/output.c", '"polarization_C_m2", ly->polarization_C_m2', '"polarization_C_m2", ly->bands.Psp_C_m2', "layer polarization prints P_sp only"),
    ("json_mch", "src/output.c", '"mch", ly->bands.mch_z', '"mch", ly->bands.mch_par', "mch prints the in-plane mass"),
    ("json_sheet", "src/output.c", '"sheet_charge_C_m2", ew_interface_charge_C_m2(st, k)', '"sheet_charge_C_m2", ew_interface_bound_C_m2(st, k)', "sheet charge prints the unscreened charge"),
    ("wz_ezz", "src/strain_wurtzite.c", '-2.0 * m->c13_kbar / m->c33_kbar * exx', '-2.0 * m->c13_kbar / m->c33_kbar * exx * 1.01', "eps_zz off by 1 %"),
    ("wz_ppz", "src/strain_wurtzite.c", '(m->e31_C_m2 - m->e33_C_m2 * m->c13_kbar / m->c33_kbar)', '(m->e31_C_m2 + m->e33_C_m2 * m->c13_kbar / m->c33_kbar)', "piezoelectric sign of e33 term"),
    ("wz_lh_weight", "src/strain_wurtzite.c", 'double w_lh = gap > 0.0 ? (E[1] - la) / gap : 1.0', 'double w_lh = gap > 0.0 ? (E[1] - la) / gap * 0.99 : 1.0', "Γ7 mixing weight off by 1 %"),
    ("pol_sigma", "src/polarization.c", 'return st->layers[k].polarization_C_m2 - st->layers[k + 1].polarization_C_m2;', 'return st->layers[k + 1].polarization_C_m2 - st->layers[k].polarization_C_m2;', "interface charge sign"),
    ("pol_eps0", "src/polarization.c", 'double E = (D - ly->pol_field_kV_cm) / (EW_EPS0_FM * ly->bands.eps_r);', 'double E = (D - ly->pol_field_kV_cm) / (1.01 * EW_EPS0_FM * ly->bands.eps_r);', "static field off by 1 %"),
    ("pol_screen", "src/polarization.c", 'double cut = faces * EW_E_C * st->screening_sheet_cm2 * 1e4;', 'double cut = EW_E_C * st->screening_sheet_cm2 * 1e4;', "screening counts one face only"),
    ("rep_pol", "src/report.c", 'num(f, 5, \'f\', st->layers[k].polarization_C_m2);', 'num(f, 5, \'f\', st->layers[k].bands.Psp_C_m2);', "report P prints P_sp"),
    ("tab_pol_field", "src/output.c", 'st->layers[k].bands.Psp_C_m2, st->layers[k].bands.Ppz_C_m2,\n            ew_result_layer_field_kV_cm(r, k));', 'st->layers[k].bands.Psp_C_m2, st->layers[k].bands.Psp_C_m2,\n            ew_result_layer_field_kV_cm(r, k));', "table P_pz prints P_sp"),
    ("pol_poisson", "src/polarization.c", 'q[i] += ew_interface_charge_C_m2(st, k) / EW_E_C * 1e-18;', 'q[i] += 0.99 * ew_interface_charge_C_m2(st, k) / EW_E_C * 1e-18;', "Poisson bound charge off by 1 %"),
    # JSON fields printing a neighbour's member (src/output.c)
    ("json_ec", "src/output.c", '"Ec_eV", ly->bands.Ec_eV', '"Ec_eV", ly->bands.Ev_hh_eV', "layer Ec_eV prints Ev_hh"),
    ("json_mhh", "src/output.c", '"mhh", ly->bands.mhh_z', '"mhh", ly->bands.mlh_z', "layer mhh prints mlh"),
    ("json_epsperp", "src/output.c", '"eps_perp", ly->bands.eps_perp', '"eps_perp", ly->bands.eps_par', "eps_perp prints eps_par"),
    ("json_zstart", "src/output.c", '"z_start_nm", ly->z_start_nm', '"z_start_nm", ly->thickness_nm', "z_start prints thickness"),
    ("json_dev", "src/output.c", '"dEv_eV", in.dEv_eV', '"dEv_eV", in.dEc_eV', "interface dEv prints dEc"),
    ("json_edge", "src/output.c", '"edge_eV", s->edge_eV', '"edge_eV", s->depth_eV', "state edge prints depth"),
    ("json_lprob", "src/output.c", '"layer_probability", s->layer_probability', '"layer_probability", s->residual', "layer_probability prints residual"),
    ("json_inplane", "src/output.c", '"inplane_mass_m0", s->inplane_mass', '"inplane_mass_m0", s->layer_probability', "inplane mass prints probability"),
    ("json_dipole", "src/output.c", '"dipole_nm", ln->dipole_nm', '"dipole_nm", ln->oscillator_strength', "dipole prints f"),
    ("json_wlum", "src/output.c", '"wavelength_um", ln->wavelength_nm / 1e3', '"wavelength_um", ln->wavelength_nm / 1e2', "wavelength_um scaled wrong"),
    ("json_te", "src/output.c", '"te_strength", ln->te_strength', '"te_strength", ln->tm_strength', "te prints tm"),
    ("json_pl", "src/output.c", '"pl_peak_eV", ln->pl_peak_eV', '"pl_peak_eV", ln->energy_eV', "pl peak prints line energy"),
    ("json_xb", "src/output.c", '"exciton_binding_eV", ln->exciton_binding_eV', '"exciton_binding_eV", ln->overlap', "exciton binding prints overlap"),
    ("json_holes", "src/output.c", '"holes_cm2", sp->holes_cm2', '"holes_cm2", sp->electrons_cm2', "holes prints electrons"),
    ("json_acc", "src/output.c", '"acceptors_ionised_cm2", sp->acceptors_ion_cm2', '"acceptors_ionised_cm2", sp->donors_ion_cm2', "acceptors prints donors"),
    ("json_window", "src/output.c", '"window_eV", r->window_eV[b]', '"window_eV", r->window_eV[0]', "window of band e for all"),
    ("json_field", "src/output.c", '"field_kV_cm", st->field_kV_cm', '"field_kV_cm", st->temperature_K', "field prints T"),
    ("json_step", "src/output.c", '"grid_step_nm", r->step_nm', '"grid_step_nm", 2.0 * r->step_nm', "grid step doubled"),
    # CSV columns swapped (src/output.c)
    ("csv_prof_hl", "src/output.c", 'ew_csv_format(c, "%.8f", g->edge[b][i]);', 'ew_csv_format(c, "%.8f", g->edge[b == 1 ? 2 : b == 2 ? 1 : b][i]);', "profile Ev_hh/Ev_lh swapped"),
    ("csv_lv_edge", "src/output.c", 'ew_csv_format(c, "%.8f", q->edge_eV);', 'ew_csv_format(c, "%.8f", q->depth_eV);', "levels edge prints depth"),
    ("csv_lv_err", "src/output.c", 'ew_csv_format(c, "%.3e", q->error_eV);', 'ew_csv_format(c, "%.3e", q->residual);', "levels error prints residual"),
    ("csv_ln_te", "src/output.c", 'ew_csv_format(c, "%.6f", ln->te_strength);', 'ew_csv_format(c, "%.6f", ln->tm_strength);', "lines te prints tm"),
    ("csv_ln_xb", "src/output.c", 'ew_csv_format(c, "%.8f", ln->exciton_binding_eV);', 'ew_csv_format(c, "%.8f", ln->overlap);', "lines exciton prints overlap"),
    ("csv_ln_f", "src/output.c", 'ew_csv_format(c, "%.8f", ln->oscillator_strength);', 'ew_csv_format(c, "%.8f", ln->dipole_nm);', "lines f prints dipole"),
    ("csv_wave", "src/output.c", 'r->psi[j * g->n + i]', 'r->psi[j * g->n + (i ? i - 1 : 0)]', "wavefunction column shifted by a node"),
    # sweep, match, tolerance writers
    ("sw_col", "src/sweep.c", 'row[j + 2] = d->interband ? ln->overlap : ln->oscillator_strength;', 'row[j + 2] = d->interband ? ln->overlap : ln->dipole_nm;', "sweep f column holds the dipole"),
    ("sw_wl", "src/sweep.c", 'row[j + 1] = d->interband ? ln->wavelength_nm : ln->wavelength_nm / 1e3;', 'row[j + 1] = d->interband ? ln->wavelength_nm / 1e3 : ln->wavelength_nm / 1e3;', "sweep interband nm column in um"),
    ("sw_lev", "src/sweep.c", 'row[j++] = ew_wf_level_energy(r, (ew_band)b, (int)n);', 'row[j++] = ew_wf_level_energy(r, (ew_band)b, (int)(n > 1 ? n - 1 : n));', "sweep level column off by one"),
    ("sw_name", "src/sweep.c", '(d->interband ? ib : isb)[j % 3]', '(d->interband ? isb : ib)[j % 3]', "sweep line column names swapped"),
    ("match_wl", "src/match.c", 'const double *a[] = {s->value, s->energy_eV, s->wavelength_nm, s->residual_eV};', 'const double *a[] = {s->value, s->energy_eV, s->residual_eV, s->wavelength_nm};', "match JSON wavelength/residual swapped"),
    ("match_tol", "src/match.c", 'ew_json_write_number(out, s->value_minus);', 'ew_json_write_number(out, s->value_plus);', "match JSON minus prints plus"),
    # physical constants off by 1 % (src/constants.h)
    ("c_hbar", "src/constants.h", '1.054571817e-34', '1.065117535e-34', "hbar +1 %"),
    ("c_m0", "src/constants.h", '9.1093837015e-31', '9.2004775385e-31', "m0 +1 %"),
    ("c_h", "src/constants.h", '4.135667696e-15', '4.177024373e-15', "h (eV s) +1 %: hc"),
    ("c_kb", "src/constants.h", '8.617333262e-5', '8.703506595e-5', "kB +1 %"),
    ("c_eps0", "src/constants.h", '8.8541878128e-12', '8.9427296909e-12', "eps0 +1 %"),
    ("c_e", "src/constants.h", '#define EW_E_C 1.602176634e-19', '#define EW_E_C 1.618198400e-19', "e +1 %"),
    # catalogue values off by 1 %
    ("cat_gaas_me", "materials/GaAs.cfg", 'me = { value = 0.067;', 'me = { value = 0.0677;', "GaAs me +1 %"),
    ("cat_gaas_eg", "materials/GaAs.cfg", 'Eg_G = { value = 1.519;', 'Eg_G = { value = 1.534;', "GaAs Eg +1 %"),
    ("cat_gaas_g1", "materials/GaAs.cfg", 'gamma1 = { value = 6.98;', 'gamma1 = { value = 7.05;', "GaAs gamma1 +1 %"),
    ("cat_gaas_a", "materials/GaAs.cfg", 'a_lattice = { value = 5.65325;', 'a_lattice = { value = 5.70978;', "GaAs a +1 %"),
    ("cat_gaas_eps", "materials/GaAs.cfg", 'eps_static = { value = 12.9;', 'eps_static = { value = 13.03;', "GaAs eps +1 %"),
    ("cat_gaas_ac", "materials/GaAs.cfg", 'a_c = { value = -7.17;', 'a_c = { value = -7.24;', "GaAs a_c +1 %"),
    ("cat_gaas_ep", "materials/GaAs.cfg", 'Ep = { value = 28.8;', 'Ep = { value = 29.1;', "GaAs Ep +1 %"),
    ("cat_inas_a", "materials/InAs.cfg", 'value = 6.0583', 'value = 6.1189', "InAs a +1 %"),
    # numerics
    ("rich_3", "src/states.c", 'double corr = (e - ec) / 3.0;', 'double corr = (e - ec) / 4.0;', "Richardson factor 1/4"),
    ("rich_sign", "src/states.c", 'return e + corr;', 'return e - corr;', "Richardson step of wrong sign"),
    ("coarse_node", "src/schrodinger.c", 'fine->vectors[j * g->n + 2 * i + 1]', 'fine->vectors[j * g->n + 2 * i]', "coarse node samples the wrong fine node"),
    # physics
    ("varshni", "src/alloy.c", 'return Eg0_eV - 1e-3 * alpha_meV_K * T_K * T_K / den;', 'return Eg0_eV - 1e-3 * alpha_meV_K * T_K / den;', "Varshni T instead of T^2"),
    ("strain_ez", "src/strain.c", 'double ez = -2.0 * (m->c12_kbar / m->c11_kbar) * ep;', 'double ez = -2.0 * (m->c11_kbar / m->c12_kbar) * ep;', "eps_perp c11/c12 swapped"),
    ("strain_shear", "src/strain.c", 'double q = m->b_eV * (ez - ep);', 'double q = m->b_eV * (ep - ez);', "shear sign"),
    ("strain_hyd", "src/strain.c", 'out->dEc_eV = m->a_c_eV * tr;', 'out->dEc_eV = m->a_c_eV * ep;', "hydrostatic uses eps_par"),
    ("kane_edge", "src/alloy.c", 'double inv = 1.0 / me0 + Ep / 3.0 * (2.0 / Eg + 1.0 / (Eg + D)', 'double inv = 1.0 / me0 + Ep / 3.0 * (1.0 / Eg + 1.0 / (Eg + D)', "Kane edge mass factor 2"),
    ("kane_np", "src/nonparabolic.c", 'double inv = 1.0 / me + Ep / 3.0 * (2.0 / (Eg + e)', 'double inv = 1.0 / me + Ep / 2.0 * (2.0 / (Eg + e)', "Kane energy mass 1/2"),
    ("osc_f", "src/observables.c", 'return dE_eV * dipole_nm * dipole_nm / (EW_HB2M0_EVNM2 * inverse_mass);', 'return dE_eV * dipole_nm * dipole_nm / (2.0 * EW_HB2M0_EVNM2 * inverse_mass);', "oscillator strength halved"),
    ("exc_c", "src/exciton.c", 'double C = EW_E_C / (4.0 * EW_PI * EW_EPS0_FM) * 1e9 / eps_r;', 'double C = EW_E_C / (4.4 * EW_PI * EW_EPS0_FM) * 1e9 / eps_r;', "exciton Coulomb constant -10 %"),
    ("exc_hh", "src/exciton.c", 'if (hole_band == EW_BAND_HH) t = 0.5, m = 0.0;', 'if (hole_band == EW_BAND_HH) t = 0.5, m = 0.5;', "TE/TM weights of hh"),
    ("poisson_c", "src/poisson.c", '#define POISSON_C (EW_E_C / EW_EPS0_FM * 1e9)', '#define POISSON_C (1.01 * EW_E_C / EW_EPS0_FM * 1e9)', "Poisson factor +1 %"),
    ("hc_line", "src/lines.c", 'ln->wavelength_nm = EW_HC_EVNM / ln->energy_eV;', 'ln->wavelength_nm = 1.01 * EW_HC_EVNM / ln->energy_eV;', "wavelength hc/E +1 %"),
    # sharded matches (match.c, match_part.c; killed by test_merge.c)
    ("mp_minus", "src/match_part.c", 'num(out, s->value_minus);', 'num(out, s->value_plus);', "match part writes value_plus as value_minus"),
    ("mp_reach", "src/match_part.c", 'm->reached_max_eV[i] = fmax(', 'm->reached_max_eV[i] = fmin(', "merged reach: max of the parts' minima"),
    ("mp_span", "src/match.c", '*lo = (size_t)((unsigned long long)n * (k - 1) / parts);', '*lo = (size_t)((unsigned long long)n * (k - 1) / parts + (k > 1));', "a part skips its first interval"),
    # mp_cells is equivalent in the tested cases (survives): a part without a sign-changing
    # cell offers its best point, and Newton from it reaches the same root as from the cells
    ("mp_cells", "src/match.c", '    if (st[k].cell) {', '    if (!st[k].cell) {', "merge picks the best points over the cell corners"),
    # stack editor (stack_edit.c; killed by test_workflow.c)
    ("ed_detach", "src/stack_edit.c", '  s->line = g->line;\n  detach(g, s);', '  s->line = g->line;', "a reserved key stays in the tree between builds"),
    # lm_bisect and lm_mid are equivalent mutants (2026-12-02 campaign: both survive): the
    # bisection tests only the sign of f(lo), which a stale value keeps, and it runs until the
    # bracket is 1e-16 wide, so any point inside it is the same root
    ("lm_bisect", "src/lattice_match.c", 'if ((fm > 0) == (flo > 0)) lo = m, flo = fm;', 'if ((fm > 0) == (flo > 0)) lo = m;', "bisection keeps stale f(lo)"),
    ("lm_mid", "src/lattice_match.c", '*u = 0.5 * (lo + hi);', '*u = lo + 0.75 * (hi - lo);', "bisection result off the bracket middle"),
    ("mb_const", "src/strain.c", '(8.0 * EW_PI * f * (1.0 + nu) * cos(lambda))', '(8.0 * EW_PI * f * (1.0 + nu) * cos(lambda) * 1.01)', "MB constant +1 %"),
    ("mb_bd", "src/strain.c", 'double bd = a_nm / sqrt(2.0);', 'double bd = a_nm / 2.0;', "Burgers vector a/2"),
    ("coarse_U", "src/grid.c", 'out[i] = U_fine[2 * i + 1];', 'out[i] = U_fine[2 * i];', "coarse potential sampled at the wrong fine node"),
    ("lm_dir", "src/lattice_match.c", 'if ((fm > 0) == (flo > 0)) lo = m, flo = fm;', 'if ((fm > 0) != (flo > 0)) lo = m, flo = fm;', "bisection keeps the wrong half"),
    ("lm_gap_dir", "src/lattice_match.c", 'if ((f > 0) == (b.flo > 0)) b.lo = m, b.flo = f;', 'if ((f > 0) != (b.flo > 0)) b.lo = m, b.flo = f;', "gap bisection keeps the wrong half"),
    ("poisson_acc", "src/poisson.c", 'return p - n + nd - na;', 'return p - n + nd + na;', "ionised acceptors counted positive"),
    ("donor_g", "src/poisson.c", 'occ((EF - (ec - h->Ed)) / kT, 2.0)', 'occ((EF - (ec - h->Ed)) / kT, 4.0)', "donor degeneracy 4"),
    ("spread_rate", "src/tolerance.c", 's.rate_eV = fabs(rate) * t->rate_percent / 100.0;', 's.rate_eV = fabs(rate) * t->rate_percent / 10.0;', "spread growth-rate term x10"),
    ("spread_ml", "src/tolerance.c", 'double a = L->dEdt_hf[i] * L->ml_nm;', 'double a = L->dEdt_hf[i] * L->fd_dt_nm;', "spread thickness term uses the FD step"),
    ("spread_worst", "src/tolerance.c", 's.worst_eV += fabs(c);', 's.worst_eV += 0.0 * fabs(c);', "worst case leaves out composition"),
    ("ladder_pl", "src/tolerance.c", 'return ln->exciton_binding_eV > 0 ? ln->pl_peak_eV : NAN;', 'return ln->exciton_binding_eV > 0 ? ln->energy_eV : NAN;', "ladder PL prints the line"),
    ("rep_tm", "src/report.c", 'num(f, 3, \'f\', ln->tm_strength);', 'num(f, 3, \'f\', ln->te_strength);', "report TM prints TE"),
    ("rep_plnm", "src/report.c", 'num(f, 2, \'f\', ew_line_pl_peak_nm(ln));', 'num(f, 2, \'f\', ln->wavelength_nm);', "report PL nm prints band-to-band nm"),
    ("rep_sheet", "src/report.c", 'num(f, 4, \'e\', sp->sheet_cm2[i]);', 'num(f, 4, \'e\', sp->sheet_cm2[0]);', "report sheet density of e1 for all"),
    ("rep_depol", "src/report.c", 'double d = sp->depol_eV[i], e = ln->energy_eV + d;\n    fprintf(f, "<tr>', 'double d = sp->depol_eV[i], e = ln->energy_eV - d;\n    fprintf(f, "<tr>', "report depolarised line shifted down"),
    ("bd_fermi", "src/band_diagram.c", 'double y0 = panel_y(p, sp->fermi_eV)', 'double y0 = panel_y(p, sp->fermi_eV + 0.005)', "Fermi line 5 meV high"),
    ("bd_levels", "src/band_diagram.c", 'return max_lv <= 0 || s->n <= max_lv;', 'return max_lv <= 0 || s->n <= max_lv + 1;', "one level more than asked drawn"),
    ("xy_colour", "src/xy_chart.c", 'if (s < 12) return palette[s];', 'if (s < 12) return palette[s % 8];', "chart colours reused after eight"),
    ("tol_ml", "src/tolerance.c", '"shift_minus_1ML_eV", L->ml_minus', '"shift_minus_1ML_eV", L->ml_plus', "tolerance -1ML prints +1ML"),
    ("tol_hf", "src/tolerance.c", '"dEdt_HF_eV_per_nm", L->dEdt_hf', '"dEdt_HF_eV_per_nm", L->dEdt_fd', "tolerance HF prints FD"),
    ("tol_dx", "src/tolerance.c", '"dEdx_FD_eV", L->has_x ? L->dEdx_fd', '"dEdx_FD_eV", L->has_x ? L->dEdx_hf', "tolerance dE/dx FD prints HF"),
    ("tol_dxhf", "src/tolerance.c", '"dEdx_HF_eV", L->has_x ? L->dEdx_hf', '"dEdx_HF_eV", L->has_x ? L->dEdx_fd', "tolerance dE/dx HF prints FD"),
    ("tol_ml_nm", "src/tolerance.c", 'ew_json_write_number(out, L->ml_nm);', 'ew_json_write_number(out, L->thickness_nm);', "monolayer_nm prints thickness"),
    ("spec_csv", "src/spectra_workflow.c", 'if (s->interband_rel) fprintf(out, "%.10g", s->interband_rel[k]);', 'if (s->interband_rel) fprintf(out, "%.10g", s->intersubband ? s->intersubband[k] : s->interband_rel[k]);', "spectra CSV interband column holds intersubband"),
    # continuum (src/continuum.c, src/output.c, src/spectra_workflow.c, src/sweep.c, src/match.c)
    ("ct_norm", "src/continuum.c", 'return EW_PI * t / sn * (a0 * b0', 'return 1.01 * EW_PI * t / sn * (a0 * b0', "lead normalisation off by 1 %"),
    ("ct_dfde", "src/continuum.c", 'return photon_eV * q / (EW_HB2M0_EVNM2 * c->invm);', 'return photon_eV * q / (EW_HB2M0_EVNM2 * c->invm * 1.01);', "df/dE off by 1 %"),
    ("ct_json", "src/output.c", 'ew_json_key_num(j, "continuum", sr[1]);', 'ew_json_key_num(j, "continuum", sr[0]);', "sum_rule continuum prints bound"),
    ("ct_csv", "src/spectra_workflow.c", 'if (s->continuum) fprintf(out, "%.10g", s->continuum[k]);', 'if (s->continuum) fprintf(out, "%.10g", s->intersubband[k]);', "continuum column holds the bound lines"),
    ("sw_depol", "src/sweep.c", 'snprintf(nm, sizeof nm, "%s:depol", P->lines[k].name);', 'snprintf(nm, sizeof nm, "%s", P->lines[k].name);', "depol column holds the bare line"),
    ("match_top", "src/match.c", 'if (top && T >= 0 && T <= s->Eedge[i]) {', 'if (top && T > 0 && T <= s->Eedge[i]) {', "e2-top at 0 finds nothing"),
    ("match_nm", "src/match.c", 'ew_json_write_number(out, r->target[i].nm);', 'ew_json_write_number(out, r->target[i].eV);', "match target_nm prints eV"),
    ("sw_json", "src/sweep.c", 'if (k + 1 < ncol) ew_json_write_number(json, row[k]);', 'if (k + 1 < ncol) ew_json_write_number(json, row[k + 1 < ncol - 1 ? k + 1 : k]);', "sweep JSON value of the next column"),
    ("sw_total", "src/sweep.c", '"\\"count\\":%zu},\\"columns\\":[", P->np,', '"\\"count\\":%zu},\\"columns\\":[", P->hi - P->lo,', "sweep points_total = shard count"),
    # k·p hole dispersion (src/kp_hamiltonian.c, src/dispersion_output.c)
    ("kp_lt", "src/kp_hamiltonian.c", "double Lt = -g1 - 4.0 * g2, Mt = -g1 + 2.0 * g2;", "double Lt = -g1 - 4.0 * g2, Mt = -g1 + 2.2 * g2;", "in-plane Mt off by 10 % of γ2"),
    ("kp_g3", "src/kp_hamiltonian.c", "A[1] = A[3] = -6.0 * gb * kx * ky;", "A[1] = A[3] = -6.0 * ga * kx * ky;", "warping term with γ2 for γ3"),
    ("kp_axial", "src/kp_hamiltonian.c", "double ga = p->axial ? 0.5 * (g2 + g3) : g2,", "double ga = p->axial ? g2 : g2,", "axial approximation leaves γ2"),
    ("kp_vz", "src/kp_hamiltonian.c", "p->v_z[i] = 0.5 * (3.0 * -g->pot[EW_BAND_LH][i] - p->v_xy[i]);", "p->v_z[i] = 0.5 * (3.0 * -g->pot[EW_BAND_HH][i] - p->v_xy[i]);", "4-band light hole at the heavy-hole edge"),
    ("kp_dir", "src/dispersion.c", "cy = o->direction == 100 ? 0.0 : sqrt(0.5);", "cy = o->direction == 100 ? 0.0 : 0.0;", "[110] samples [100]"),
    ("kp_json_band", "src/dispersion_output.c", 'ew_json_key_str(&j, "band", ew_dispersion_character_name(d->character[s]));', 'ew_json_key_str(&j, "band", ew_dispersion_character_name(0));', "band always hh"),
    ("kp_csv_k", "src/dispersion_output.c", 'fprintf(out, "%.10g", d->k_inv_nm[i]);', 'fprintf(out, "%.10g", d->k_inv_nm[i ? i - 1 : 0]);', "CSV k column shifted"),
    # material gain (src/gain*.c)
    ("gn_json_dF", "src/gain_output.c", 'ew_json_key_num(&j, "fermi_separation_eV", g->fermi_c_eV[d] - g->fermi_v_eV[d]);', 'ew_json_key_num(&j, "fermi_separation_eV", g->fermi_c_eV[d]);', "fermi_separation prints Fc"),
    ("gn_json_tm", "src/gain_output.c", 'num_array(&j, "gain_tm_cm", g->gain_tm + at, g->ne_pts);', 'num_array(&j, "gain_tm_cm", g->gain_te + at, g->ne_pts);', "gain_tm prints TE"),
    ("gn_csv_swap", "src/gain_output.c", 'g->energy_eV[i], g->gain_te[at],\n              g->gain_tm[at], g->spont[at]);', 'g->energy_eV[i], g->gain_tm[at],\n              g->gain_te[at], g->spont[at]);', "CSV TE and TM columns swapped"),
    ("gn_pref", "src/gain_spectrum.c", '(2.0 * n_r * EW_C_MS * EW_EPS0_FM * EW_M0_KG * g->well_nm * 1e-9) * 1e18 * 0.01;', '(2.0 * n_r * EW_C_MS * EW_EPS0_FM * EW_M0_KG * g->well_nm * 1e-9) * 1e18 * 0.0101;', "gain prefactor off by 1 %"),
    ("gn_sp_avg", "src/gain_spectrum.c", 'double wsp = ds * (2.0 * te + tm) / 3.0 * fc * (1.0 - fv);', 'double wsp = ds * (te + tm) / 2.0 * fc * (1.0 - fv);', "spontaneous emission polarisation average"),
    ("gn_tm", "src/gain.c", 'if (r % 3 == 2) tm += a2;', 'if (r % 3 == 1) tm += a2;', "TM takes the y component"),
    ("gn_hole_tail", "src/gain_fermi.c", 'p += m * kT / (2.0 * EW_PI * 2.0 * EW_HB2M0_EVNM2) * ew_gain_softplus((E[N] - Fv) / kT);', 'p += m * kT / (2.0 * EW_PI * 2.2 * EW_HB2M0_EVNM2) * ew_gain_softplus((E[N] - Fv) / kT);', "hole tail beyond kmax 10 % short"),
    ("gn_sech", "src/gain_spectrum.c", 'g->o.lorentzian ? 2.0 : 2.0 * acosh(2.0))};', 'g->o.lorentzian ? 2.0 : 2.0)};', "secant width without arcosh 2"),
    ("line_name", "src/line_name.c", 'for (int b = 0; b < (int)band; b++) off += r->band_count[b];', 'for (int b = 0; b < (int)band; b++) off += r->band_count[0];', "level index offset uses e count"),
    # sharded sweeps joined (src/sweep_merge.c), progress and cancelling (src/progress.c, …)
    ("mg_count", "src/sweep_merge.c", '"count\\":%zu}%s", pt[0].pre,\n            pt[0].total,', '"count\\":%zu}%s", pt[0].pre,\n            pt[0].total - 1,', "merged JSON's shard count one short"),
    ("mg_sep", "src/sweep_merge.c", 'fputs(*first_row ? "\\n" : ",\\n", out);', 'fputs(*first_row ? "\\n" : "\\n,", out);', "merged JSON rows separated wrongly"),
    ("mg_dup", "src/sweep_merge.c", 'for (size_t j = 0; j < i; j++)', 'for (size_t j = 1; j < i; j++)', "a duplicate of the first JSON part passes"),
    ("mg_gap", "src/sweep_merge.c", 'if (pt[i].first > next)', 'if (pt[i].first > next + 1)', "a one-point gap between CSV parts passes"),
    ("pg_total", "src/sweep.c", 'ew_progress_init(&pg, o->progress, o->progress_ctx, P->hi - P->lo);', 'ew_progress_init(&pg, o->progress, o->progress_ctx, P->np);', "sweep progress total counts every shard"),
    ("pg_steps", "src/solve.c", '(sc ? budget : 0) + 1 + (opt->excitons ? 1 : 0)', '(sc ? budget : 0) + 2', "solve progress total ignores the excitons"),
    ("pg_after", "src/progress.c", 'if (!p->cancelled) { /* steps finishing after a cancel are not counted */', 'if (1) { /* steps finishing after a cancel are not counted */', "the callback is called after it cancelled"),
]


def run(cmd, cwd, timeout=900):
    p = subprocess.run(cmd, cwd=cwd, stdout=subprocess.PIPE, stderr=subprocess.STDOUT,
                       timeout=timeout)
    return p.returncode, p.stdout.decode("utf-8", "replace")


def sync_tree(frm=BASE, to=TREE):
    os.makedirs(to, exist_ok=True)
    for item in COPY:
        src = os.path.join(frm, item)
        if not os.path.exists(src):
            continue
        if os.path.isdir(src):
            for dp, _, files in os.walk(src):
                rel = os.path.relpath(dp, frm)
                os.makedirs(os.path.join(to, rel), exist_ok=True)
                for f in files:
                    restore(os.path.join(rel, f), frm, to)
        else:
            restore(item, frm, to)


def restore(rel, frm, to):
    """Copy rel from frm to to unless identical (a fresh mtime: make rebuilds)."""
    src, dst = os.path.join(frm, rel), os.path.join(to, rel)
    with open(src, "rb") as f:
        data = f.read()
    if os.path.exists(dst):
        with open(dst, "rb") as f:
            if f.read() == data:
                return
    with open(dst, "wb") as f:
        f.write(data)


# the slow programs last; a mutant stops at its first failing program unless --all
SLOW = ["test_roundtrip", "test_roundtrip_workflow", "test_poisson", "test_workflow"]


def run_tests(shell, first_only=True):
    tdir = os.path.join(TREE, "build", "tests")
    failed = []
    names = [t for t in sorted(os.listdir(tdir)) if t.startswith("test_") and
             not t.endswith(".d") and os.access(os.path.join(tdir, t), os.X_OK)]
    names.sort(key=lambda t: SLOW.index(t) + 1 if t in SLOW else 0)
    names = [t for t in names if t not in SKIP]
    for t in names:
        if failed and first_only:
            break
        path = os.path.join(tdir, t)
        try:
            rc, _ = run([path], TREE, timeout=300)
        except subprocess.TimeoutExpired:
            rc = -1
        if rc != 0:
            failed.append(t)
    if shell and not (failed and first_only):
        for s in ["tests/cli_test.sh", "tests/workflow_cli.sh"]:
            rc, _ = run(["sh", s, "build/epiwell"], TREE, timeout=900)
            if rc != 0:
                failed.append(os.path.basename(s))
    return failed


SKIP = []  # --skip=test_NAME: leave that program out (what did the suite catch without it?)


def main(argv):
    SKIP.extend(a.split("=", 1)[1] for a in argv if a.startswith("--skip="))
    shell = "--shell" in argv
    ids = [a for a in argv if not a.startswith("--")]
    if "--list" in argv:
        for m in MUTANTS:
            print(f"{m[0]:14} {m[1]:22} {m[4]}")
        return 0
    byid = {m[0]: m for m in MUTANTS}
    unknown = [i for i in ids if i not in byid]
    if unknown:
        print("unknown mutant ids:", " ".join(unknown))
        return 2
    todo = [byid[i] for i in ids] if ids else MUTANTS  # in the order given
    if os.path.isdir(BASE):
        shutil.rmtree(BASE)
    sync_tree(ROOT, BASE)
    sync_tree()
    rc, out = run(BUILD, TREE)
    if rc != 0:
        print(out)
        return 2
    base = [] if "--no-baseline" in argv else run_tests(shell, first_only=False)
    if base:
        print("the unmutated tree fails:", " ".join(base))
        return 2
    rows = []
    for mid, rel, old, new, what in todo:
        sync_tree()
        path = os.path.join(TREE, rel)
        with open(path, encoding="utf-8") as f:
            text = f.read()
        if old not in text:
            print(f"{mid}: pattern not found in {rel}", file=sys.stderr)
            rows.append((mid, rel, what, "missing", ""))
            continue
        with open(path, "w", encoding="utf-8") as f:
            f.write(text.replace(old, new, 1))
        t0 = time.time()
        rc, out = run(BUILD, TREE)
        if rc != 0:
            status, by = "build", ""
        else:
            failed = run_tests(shell, "--all" not in argv)
            status = "killed" if failed else "SURVIVED"
            by = " ".join(failed)
        rows.append((mid, rel, what, status, by))
        print(f"{mid}\t{rel}\t{what}\t{status}\t{by}\t({time.time() - t0:.0f} s)", flush=True)
    sync_tree()  # leave the copy unmutated
    with open(os.path.join(WORK, "results.tsv" if not ids else "results-some.tsv"), "w") as f:
        for r in rows:
            f.write("\t".join(r) + "\n")
    survived = [r[0] for r in rows if r[3] == "SURVIVED"]
    print(f"{len(rows)} mutants, {sum(r[3] == 'killed' for r in rows)} killed, "
          f"{len(survived)} survived{': ' + ' '.join(survived) if survived else ''}")
    return 1 if survived else 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
