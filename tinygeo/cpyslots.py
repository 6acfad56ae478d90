"""Attribute layout of the column's objects for CPython (host only).

CPython reads and writes an attribute held in a slot faster than one held
in the instance's dict (a Column has 140 attributes and a record 40: more
than CPython 3.11 keeps in a shared-key dict), and ``Column.feed`` with the
values a table row reads does several hundred attribute operations per
reading: with these names as ``__slots__`` alone it took 14 % less time on
CPython 3.11 (3.40 against 3.97 us per reading, bench/replay_bench.py's
"column floor"; bench/README.md). Each tuple ends in ``__dict__``: an
attribute not listed here still works, only slower (tests/test_structure.py
fails on any that a column sets).

tinygeo.column uses these names only under CPython (sys.implementation):
on MicroPython a class with ``__slots__`` keeps the tuple of names in RAM
and its feed was 9 % slower, so there it makes plain classes, and the
device package leaves this module out (ports/micropython/make_package.py).
It imports nothing.
"""

# tinygeo.column.Column: settings, results and the private state of feed
COLUMN: "tuple[str, ...]" = (
    "_a_m", "_anchor", "_b", "_burst_n", "_c_dt", "_c_lim", "_c_neg", "_cr", "_e_g", "_e_n",
    "_e_p", "_e_t", "_f_a", "_f_b", "_f_bv", "_f_cv", "_f_cx", "_f_dt", "_f_hi", "_f_lo",
    "_f_v", "_fl_clk", "_fl_end", "_fl_g", "_fl_hi", "_fl_lo", "_float_u", "_g_start", "_h",
    "_has_b", "_k", "_kn", "_kz", "_land_end", "_land_hi", "_land_lo", "_land_u",
    "_launch_line", "_lv", "_lv_first", "_lvl", "_m", "_max_clk", "_max_p", "_max_rate",
    "_min_g", "_n", "_n_g", "_n_h", "_n_hi", "_n_k1", "_n_k2", "_n_lo", "_pc", "_run", "_run_b",
    "_run_f", "_run_why", "_spk2", "_st2", "_t0_hi", "_t0_int", "_t0_lo", "_t_lim",
    "_t_lim_neg", "_tb_c0", "_tb_c1", "_tb_g0", "_tb_g1", "_tb_n", "_tb_st", "_tb_th",
    "_tb_top", "_tp_clk", "_tp_g", "_tp_p", "_tp_state", "_tp_t", "_tp_th", "_tp_top", "_unit",
    "_var_anchor", "_why", "anchor_p_pa", "bias_p_pa", "bias_rh_pct", "bias_t_k",
    "burst_drop_gpm", "burst_gph_m", "burst_p_pa", "burst_rate_gpm_s", "burst_readings",
    "burst_time_s", "count", "dry_fallback", "ellipsoid", "float_band_gpm", "float_gph_m",
    "float_s", "float_time_s", "geoid_undulation_m", "ice", "landing_band_gpm", "landing_s",
    "landing_time_s", "lat_deg", "launch_gpm", "launch_rate_gpm_s", "launch_time_s",
    "level_gph_m", "level_height_m", "level_p_pa", "level_t_k", "levels_n", "max_gph_m",
    "max_rate_m_s", "max_t_gradient_k_gpm", "max_t_rate_k_s", "max_t_step_k", "on_event",
    "phase", "rejected", "retracted", "rh_tol_pct", "sigma_p_pa", "sigma_rh_pct", "sigma_t_k",
    "smooth_gph_m", "smooth_s", "start_guard_m", "start_height_m", "takeover_readings",
    "time_unit_s", "track_sigma", "tropopause_gph_m", "tropopause_layer_gpm",
    "tropopause_max_p_pa", "tropopause_p_pa", "tropopause_t_k", "tropopause_time_s",
    "__dict__")

# tinygeo.column's record of one reading and the state after it
RECORD: "tuple[str, ...]" = (
    "big", "c", "ct", "dt", "flags", "g_t", "gph_m", "gps_diff_m", "gps_here", "gps_m", "gpsr",
    "h_p", "h_rh", "h_t", "h_tm", "half", "height_m", "lay", "nodes", "p_pa", "p_start", "q",
    "rdh", "rdt", "rh_pct", "s2", "slope", "sum_hum", "sum_p", "sum_rh", "t0", "t_k", "tm2",
    "tr", "tsr", "tv_k", "tvh", "var_done", "var_p", "w",
    "__dict__")
