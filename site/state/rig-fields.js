// Words of the rig sheet: the label and hint of every field, by JSON key.
// The units named in hints are the ones the core's parser accepts.

export const GENERAL_FIELDS = {
  title: { label: "Rig name", hint: "Shown on the report and used for file names." },
  g_m_s2: {
    label: "Gravity",
    hint: "Blank means standard gravity, 9.80665 m/s2. Units: m/s2, g, ft/s2, in/s2.",
  },
};

export const LINK_FIELDS = {
  length_m: { label: "Length", hint: "Joint to far end. Units: m, cm, mm, um, in, ft." },
  rod_mass_kg: { label: "Rod mass", hint: "The link's own mass, spread along it. Units: kg, g, lb, oz." },
  extra_inertia_kg_m2: {
    label: "Extra inertia",
    hint: "About the link's centre of mass. Units: kg m2, kg cm2, g cm2, lb in2, lb ft2, oz in2. Blank is 0.",
  },
  joint_damping_N_m_s: {
    label: "Joint damping",
    hint: "Viscous, at this link's joint. Units: N m s, lbf in s. Blank is 0.",
  },
  joint_friction_N_m: {
    label: "Joint friction",
    hint: "Dry friction torque at the joint. Units: N m, mN m, lbf in, lbf ft, ozf in. Blank is 0.",
  },
};

export const MASS_FIELDS = {
  mass_kg: { label: "Mass", hint: "Units: kg, g, lb, oz." },
  at_m: { label: "Sits at", hint: "Distance from this link's joint. Units: m, cm, mm, um, in, ft." },
};

export const WAVEFORM_NAMES = {
  sine: "Sine: pure up-and-down motion",
  crank: "Crank: slider-crank with a connecting rod",
  samples: "Samples: one cycle of measured or designed motion",
};

export const DRIVE_FIELDS = {
  waveform: { label: "Waveform", hint: "How the pivot moves over one drive revolution." },
  stroke_m: { label: "Stroke", hint: "Top to bottom of the pivot's travel. Units: m, cm, mm, um, in, ft." },
  stroke_m_samples: {
    label: "Stroke (optional)",
    hint: "Scales the samples to this stroke; blank keeps them as given. Units: m, cm, mm, um, in, ft.",
  },
  rod_length_m: {
    label: "Connecting rod",
    hint: "Crank pin to wrist pin; longer than half the stroke. Units: m, cm, mm, um, in, ft.",
  },
  samples_m: {
    label: "Samples",
    hint: "Pivot height over one cycle at equal steps, separated by commas or line breaks; "
      + "at least 8. Each may carry its unit. Units: m, cm, mm, um, in, ft.",
  },
  speed_rpm: {
    label: "Speed",
    hint: "Drive speed; one pivot cycle per revolution. Units: rpm (r/min), Hz, rad/s.",
  },
  axis_tilt_deg: {
    label: "Axis tilt",
    hint: "The drive's line off vertical in the swing plane, towards positive link angles; "
      + "-90 to 90. A tilt out of the swing plane is not modelled. Units: deg, rad. Blank is 0.",
  },
  side_stroke_m: {
    label: "Side stroke",
    hint: "Sideways travel of the pivot at the drive frequency (an elliptical path), side to side. "
      + "Units: m, cm, mm, um, in, ft. Blank is 0.",
  },
  side_phase_deg: {
    label: "Side phase",
    hint: "How far the sideways motion leads the drive's own. Units: deg, rad. Blank is 0.",
  },
};

/** The drive's path off vertical: shown in their own group of the drive. */
export const PATH_KEYS = ["axis_tilt_deg", "side_stroke_m", "side_phase_deg"];

export const LIMIT_FIELDS = {
  speed_rpm: { label: "Speed range", hint: "What the motor can do. Units: rpm (r/min), Hz, rad/s." },
  stroke_m: { label: "Stroke range", hint: "What the mechanism can be set to. Units: m, cm, mm, um, in, ft." },
};

export const LEAN_LIMIT_FIELD = {
  label: "Largest lean",
  hint: "The lean of the held pendulum you accept when the drive is off vertical; the tilt "
    + "tolerance is the tilt that reaches it. Units: deg, rad. Blank is 5 deg.",
};

/** "links[1].point_masses[0].at_m" -> "Link 2, point mass 1, sits at": for the problem list. */
export function describePath(path) {
  const words = [];
  for (const match of path.matchAll(/([^.[\]]+)(?:\[(\d+)\])?/g)) {
    const [, key, index] = match;
    const n = index === undefined ? "" : ` ${Number(index) + 1}`;
    if (key === "links") words.push(`Link${n}`);
    else if (key === "point_masses") words.push(`point mass${n}`);
    else if (key === "drive") words.push("Drive");
    else if (key === "limits") words.push("Limits");
    else if (key === "samples_m") words.push(`samples${n ? `, value${n}` : ""}`);
    else {
      const known = GENERAL_FIELDS[key] || LINK_FIELDS[key] || MASS_FIELDS[key]
        || (key === "max_lean_deg" ? LEAN_LIMIT_FIELD : null)
        || (words[0] === "Limits" ? LIMIT_FIELDS[key] : DRIVE_FIELDS[key]);
      const label = known ? known.label.toLowerCase() : key;
      words.push(index === undefined ? label : `${label} ${index === "0" ? "low" : "high"} end`);
    }
  }
  const text = words.join(", ");
  return text.charAt(0).toUpperCase() + text.slice(1);
}
