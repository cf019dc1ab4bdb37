"""The catalogue of derived values: every path the derive stage may add, with its kind and meaning.

Rule expressions may read these paths (``rulecheck rules lint`` checks against them); the kind of each
is the one the provenance helper records (:func:`rulecheck.derive.record.put`). A kind of None marks a
count or an index without a unit.
"""

from __future__ import annotations

from collections.abc import Mapping
from types import MappingProxyType

__all__ = ["CATALOGUE", "catalogue"]

# path → (kind or None for counts, meaning)
CATALOGUE: dict[str, tuple[str | None, str]] = {
    # supply
    "supply.voltage_min": ("voltage", "lowest supply voltage: nominal × (1 − tolerance)"),
    "supply.voltage_max": ("voltage", "highest supply voltage: nominal × (1 + tolerance)"),
    "supply.voltage_tolerance": ("fraction", "declared voltage band (default ±10 %, IEC 60038 from memory)"),
    "supply.frequency_tolerance": ("fraction", "declared frequency band (default ±2 %, common practice)"),
    "supply.band_declared": ("flag", "the spec declares its supply voltage band (rather than the default)"),
    "supply.unbalance": ("fraction", "voltage unbalance, NEMA definition"),
    # drive
    "drive.dc_bus_voltage": ("voltage", "DC bus of a six-pulse diode front end at nominal supply, loaded"),
    "drive.dc_bus_voltage_min": ("voltage", "DC bus at the lowest supply voltage, loaded"),
    "drive.dc_bus_voltage_max": ("voltage", "DC bus at the highest supply voltage, no load (√2·V_LL)"),
    "drive.output_voltage_max": ("voltage", "highest output voltage (given, else U_in: datasheets 0…U_in)"),
    "drive.overload_current": ("current", "short-time overload current"),
    "drive.armature_voltage_max": ("voltage", "highest armature voltage of a controlled bridge"),
    "drive.firing_angle_min": ("angle", "smallest firing angle of the bridge (default 15°)"),
    # motor
    "motor.rated_torque": ("torque", "rated torque from rated power and rated speed"),
    "motor.rated_torque_from_nameplate": ("torque", "rated power ÷ rated speed, for the cross-check"),
    "motor.pole_pairs": (None, "poles ÷ 2"),
    "motor.synchronous_speed": ("rotational_speed", "120·f/p"),
    "motor.slip": ("fraction", "(n_s − n_N)/n_s"),
    "motor.poles_inferred": (None, "2·floor(60·f/n_N)"),
    'motor.base_speed': ('rotational_speed', "speed at which the drive's voltage limit is reached"),
    "motor.magnetising_current": ("current", "no-load current (default 35 % of rated, common practice)"),
    "motor.electrical_output": ("power", "√3·V·I·cosφ·η"),
    "motor.implied_efficiency": ("fraction", "P_N ÷ rated electrical input (three-phase, single-phase or DC armature)"),
    "motor.back_emf_constant_ll_rms": ("back_emf_constant", "Ke normalised to line-to-line RMS per rad/s"),
    "motor.torque_constant_from_emf": ("torque_constant", "Kt = √3·Ke (sinusoidal PM machine)"),
    "motor.rated_back_emf": ("voltage", "DC: E_N = V_aN − I_aN·R_a − V_br"),
    "motor.brush_drop": ("voltage", "DC: brush drop (default 2 V, common practice)"),
    "motor.efficiency_class_limit": ("fraction", "IEC 60034-30-1 limit for the declared class"),
    'motor.max_speed_effective': ('rotational_speed', "lowest of the motor's and the driven train's speed limits"),
    "motor.rated_torque_given": ("flag", "the spec gives the rated torque itself (not derived from power and speed)"),
    "motor.electrical_input": ("power", "rated electrical input the nameplate implies: √3·V·I·cosφ (three-phase), "
                                        "V·I·cosφ (single-phase), V_a·I_a (DC armature)"),
    "motor.breakdown_torque": ("torque", "breakdown_torque_ratio × rated torque"),
    "motor.peak_torque": ("torque", "peak_torque_ratio × rated torque"),
    "motor.field.power": ("power", "DC: field power (given, or field voltage × field current; 0 for a permanent-magnet "
                          "or series field)"),
    "motor.field_power_needed": ("flag", "DC: the field is separately excited, shunt or compound (or not stated) and "
                                 "its power is part of the nameplate's electrical input"),
    "motor.armature_input": ("power", "DC: armature input V_a·I_a at rated load"),
    "motor.armature_implied_efficiency": ("fraction", "DC: P_N ÷ V_a·I_a, an upper bound of the efficiency (the "
                                          "field's power is all loss)"),
    "motor.nameplate_band": ("fraction", "largest |η_impl − η_decl| a true nameplate can show: printed resolution of "
                             "V, I, cosφ, η (and field power) plus the IEC 60034-1 tolerances on η and cosφ"),
    "motor.nema_rated": ("flag", "the motor is rated to NEMA MG 1 (design letter A–D, NEMA frame or service factor)"),
    "motor.large_frame": ("flag", "IEC frame ≥ 315 or NEMA frame ≥ 500 (bearing-current trigger)"),
    "motor.enclosure_solids": (None, "first IP digit of the motor enclosure (X → 0)"),
    "motor.enclosure_water": (None, "second IP digit of the motor enclosure (9K → 9, X → 0)"),
    "motor.ex_temperature_class": (None, "temperature class number n of the Ex marking (Tn)"),
    "motor.efficiency_class_number": (None, "declared IE class as a number (IE3 → 3)"),
    # transmission
    "transmission.ratio": (None, "1 for direct coupling"),
    "transmission.efficiency": ("fraction", "1 for direct coupling"),
    "transmission.reverse_efficiency": ("fraction", "equal to the forward efficiency for gear stages"),
    "transmission.application_service_factor": (None, "SF_app from hours per day and shock (classic table, "
                                                       "electric-motor prime mover)"),
    "transmission.overhung_load.element_factor": (None, "element factor of the overhung element (chain 1.0, gear "
                                                        "1.25, V-belt 1.5, flat belt 2.5; common practice)"),
    "transmission.efficiency_band_low": ("fraction", "lowest plausible efficiency for the kind and stages"),
    "transmission.efficiency_band_high": ("fraction", "highest plausible efficiency for the kind and stages"),
    # load
    "load.speed_max": ("rotational_speed", "from line speed and pulley, drum or winder core"),
    "load.speed_min": ("rotational_speed", "lowest load speed"),
    "load.torque_running": ("torque", "load torque at speed_max from the load model"),
    "load.torque_max": ("torque", "largest continuous load torque over the speed range"),
    "load.speed_at_torque_max": ("rotational_speed", "load speed where the load torque is largest"),
    "load.power_running": ("power", "load power at speed_max"),
    "load.mass_inertia": ("inertia", "inertia of linear masses at the load shaft"),
    "load.gravity": ("flag", "gravity acts on the load (hoist, incline, vertical axis)"),
    "load.rope_force": ("force", "hoist: force in one rope fall"),
    "load.holding_torque": ("torque", "torque needed at the load shaft to hold the load at rest"),
    "load.runback_friction": (None, "conveyor: friction factor credited against runback or a stop (≤ 0.012, "
                              "holdback and brake sizing)"),
    "load.runback_torque": ("torque", "inclined or declining conveyor: runback torque at the pulley shaft at the "
                            "holdback friction factor; needs load.mass, load.incline and load.pulley_diameter"),
    "load.lowering_power": ("power", "hoist: power returned while lowering at line speed"),
    "load.overhauling": ("flag", "the load can drive the motor (lowering, downhill, braking)"),
    # train
    "train.ratio": (None, "motor speed ÷ load speed"),
    "train.speed_max": ("rotational_speed", "highest motor speed in operation"),
    "train.speed_min": ("rotational_speed", "lowest continuous motor speed"),
    "train.load_torque": ("torque", "running load torque referred to the motor shaft"),
    "train.inertia_load": ("inertia", "load inertia referred to the motor shaft"),
    "train.inertia_total": ("inertia", "total inertia at the motor shaft: needs motor.inertia and the load's inertia "
                                       "(load.inertia, or the masses)"),
    "train.inertia_ratio": (None, "referred load inertia ÷ motor inertia"),
    "train.holding_torque": ("torque", "torque at the motor shaft to hold the load at rest"),
    "train.acceleration_torque": ("torque", "J_tot·ω_max/t_acc"),
    "train.deceleration_torque": ("torque", "J_tot·ω_max/t_dec of a ramped stop on a drive"),
    "train.inertia_known": ("inertia", "inertia at the motor shaft without the rotor (a lower bound of the total)"),
    "train.acceleration_torque_min": ("torque", "J_known·ω_max/t_acc: lower bound when the total inertia is not known"),
    "train.deceleration_torque_min": ("torque", "J_known·ω_max/t_dec: lower bound when the total inertia is not known"),
    "train.load_overhauling": ("flag", "the running load drives the motor (T_L·ω_L < 0)"),
    "train.peak_torque_braking": ("flag", "the largest torque is a braking torque (the load drives)"),
    "train.peak_torque_lower_bound": ("flag", "the total inertia is not known: the peak torque is a lower bound"),
    "train.standstill_torque_available": ("torque", "short-time torque available at standstill: the lower of motor "
                                                    "peak torque and the torque at the drive's overload current"),
    "train.peak_torque_required": ("torque", "largest torque the motor must give"),
    "train.speed_at_peak": ("rotational_speed", "motor speed where the largest torque is needed"),
    "train.continuous_torque_required": ("torque", "continuous (RMS) torque the motor must give"),
    "train.continuous_margin": (None, "smallest T_cont(n)/T_req(n) over the continuous speed range"),
    "train.continuous_speed_worst": ("rotational_speed", "motor speed of the smallest continuous margin"),
    "train.continuous_required_worst": ("torque", "required torque at that speed"),
    "train.continuous_capability_worst": ("torque", "continuous capability at that speed"),
    "train.continuous_cooling_worst": ("fraction", "k_cool at the speed of the smallest margin (table)"),
    "train.output_frequency_required": ("frequency", "drive output frequency at the highest motor speed"),
    "train.back_emf_at_max": ("voltage", "PM: line-to-line RMS back-EMF at the highest speed"),
    "train.armature_emf_at_max": ("voltage", "DC back-EMF at the top operating speed (rated EMF above base speed)"),
    "train.armature_voltage_required": ("voltage", "DC: E(n_max) + I_a·R_a + V_br"),
    "train.motor_current_required": ("current", "motor current at the continuous (RMS) torque"),
    "train.motor_current_peak": ("current", "motor current at the peak torque"),
    "train.gear_output_torque": ("torque", "nominal torque at the gearbox output"),
    "train.gear_output_torque_peak": ("torque", "peak torque at the gearbox output"),
    "train.gear_input_speed_max": ("rotational_speed", "highest gearbox input speed"),
    "train.acceleration_time": ("time", "time to reach speed_max with the available torque (direct on line at the "
                                        "start's dipped voltage; soft starter under its ramp and current limit)"),
    "train.cooling_table_default": ("flag", "continuous capability of a self-ventilated induction motor on a drive "
                                            "comes from the common-practice k_cool table"),
    'train.peak_torque_motor': ('torque', "motor's short-time torque at the speed of the peak, with field weakening"),
    'train.peak_torque_drive': ('torque', "motor torque at the drive's overload current at the speed of the peak"),
    "train.peak_torque_available": ("torque", "short-time torque available at the speed of the peak: the lower of "
                                              "motor and drive limits"),
    "train.acceleration_stalls": ("flag", "the available torque does not exceed the load torque somewhere during the "
                                          "run-up"),
    "train.breakaway_torque": ("torque", "torque at the motor shaft to start the load from rest"),
    "train.starting_voltage": ("fraction", "direct on line: motor terminal voltage at locked-rotor current ÷ rated "
                                           "voltage"),
    "train.soft_start_voltage": ("fraction", "soft starter: highest U/U_N its current limit allows at standstill "
                                             "(I_lim ÷ I_LR, at most 1)"),
    "train.soft_start_torque": ("torque", "soft starter: starting torque at the current limit, T_LR·(I_lim/I_LR)²"),
    "train.soft_start_initial_torque": ("torque", "soft starter: torque at the initial voltage, T_LR·U₀²"),
    "train.soft_start_margin": (None, "soft starter: smallest torque at the current limit ÷ load torque from "
                                      "standstill (breakaway) to the breakdown speed"),
    "train.soft_start_margin_speed": ("rotational_speed", "soft starter: motor speed of the smallest margin"),
    "train.soft_start_heating_time": ("time", "soft starter: ∫u² dt over the run-up, the time at locked-rotor current "
                                              "that heats the rotor as much"),
    "train.peak_duration": ("time", "how long the peak torque lasts (duty segment or acceleration time)"),
    "train.braking_energy": ("energy", "energy one ramped stop returns to the DC bus (an overhauling load stopped in "
                                       "its regenerating direction); needs load.deceleration_time"),
    "train.braking_power_peak": ("power", "largest power returned to the DC bus"),
    "train.braking_power_mean": ("power", "mean regenerated power over the cycle (E_cycle ÷ t_cycle)"),
    "train.regeneration_sustained": ("flag", "the load regenerates at steady speed (lowering, downhill, unwinding)"),
    "train.regenerates": ("flag", "anything returns to the DC bus (false: the drive coasts, or friction stops the "
                                  "load within the ramp)"),
    # duty
    "duty.peak_torque": ("torque", "largest |T| over the duty cycle at the motor shaft"),
    "duty.speed_at_peak": ("rotational_speed", "motor speed at the peak torque"),
    "duty.rms_torque": ("torque", "thermally equivalent torque (standstill cooling reduced)"),
    "duty.mean_abs_torque": ("torque", "time mean of |T|"),
    "duty.cycle_time": ("time", "cycle time"),
    "duty.standstill_time": ("time", "time at standstill per cycle"),
    "duty.on_time": ("time", "time the motor is loaded per cycle"),
    "duty.cdf": ("fraction", "cyclic duration factor on ÷ (on + off)"),
    "duty.max_speed": ("rotational_speed", "highest motor speed of the cycle"),
    "duty.regenerative_energy": ("energy", "energy returned by the motor per cycle"),
    "duty.peak_braking_power": ("power", "largest regenerative power"),
    "duty.utilisation": (None, "thermal utilisation U: of the continuous capability (speed-aware), or of the duty "
                               "rating of a motor rated S3–S6 (needs motor.duty_cdf)"),
    "duty.rms_torque_duty_rating": ("torque", "RMS torque over the cycle, every second counted (S3–S6 ratings)"),
    "duty.utilisation_duty_rating": (None, "utilisation of a motor rated S3–S6 against its duty rating"),
    "duty.rated_intermittent": ("flag", "the motor is rated for an intermittent duty (S3–S6)"),
    "duty.cycle_given": ("flag", "a duty cycle (load.duty) or profile (load.duty_profile) is given"),
    "duty.lower_bound": ("flag", "the total inertia is not known: the cycle's torques are lower bounds"),
    "duty.holding_at_standstill": ("flag", "torque is held at standstill during the cycle"),
    "duty.standstill_torque": ("torque", "largest torque held at standstill"),
    # site
    "site.motor_derating": ("fraction", "motor output factor for altitude and ambient"),
    "site.drive_derating": ("fraction", "drive current factor for altitude and ambient"),
    "site.derating_default_used": ("flag", "a common-practice default was used for the site derating"),
    'site.drive_derating_default_used': ('flag', "a common-practice default was used for the drive's site derating"),
    # cable
    "cable.phase_area": ("area", "conductor cross-section (given, or from the AWG/kcmil size) × conductors in "
                         "parallel per phase (or pole)"),
    "cable.voltage_drop": ("fraction", "voltage drop of the motor cable at rated current: three-phase, single-phase "
                           "(2·I·L·(R cosφ + X sinφ)) or DC armature circuit (2·R·I)"),
    "cable.motor_voltage_low": ("fraction", "motor voltage on the line at the low supply tolerance less the "
                                "running cable drop, share of rated voltage"),
    "cable.rise_time": ("time", "drive output voltage rise time (default 0.1 µs, common practice)"),
    "cable.critical_length": ("length", "cable length above which reflections double the voltage"),
    "cable.motor_peak_voltage": ("voltage", "estimated peak voltage at the motor terminals"),
    # protection
    "protection.full_load_current": ("current", "NEC full-load current: Table 430.250 (three-phase), 430.248 "
                                     "(single-phase) or 430.247 (DC)"),
    # supply side of the installation
    "supply.fault_current": ("current", "prospective short-circuit current S_k ÷ (√3·U_n)"),
    "supply.emc_environment": (None, "IEC 61800-3 environment: first (public LV network) or second"),
    "drive.input_thd": ("fraction", "input current THD: given, or typical for the front-end kind (common practice)"),
    "drive.short_circuit_ratio": ("fraction", "R_sce = S_k ÷ (√3·U·I_in) of the drive at the supply"),
    # environment
    "environment.ingress_minimum": (None, "IP code the site needs (given, or the default for the location)"),
    "environment.ingress_solids_min": (None, "first IP digit the site needs"),
    "environment.ingress_water_min": (None, "second IP digit the site needs (9K → 9)"),
    "environment.hazardous_area.temperature_class_number": (None, "temperature class number the area needs"),
}


def catalogue() -> Mapping[str, tuple[str | None, str]]:
    """Return every derived path with its (kind, meaning), read-only."""
    return _VIEW


_VIEW = MappingProxyType(CATALOGUE)
