// A CF grid_mapping variable turned into a proj4 definition, so that sites (lon/lat) can be
// placed on a projected model grid. Covers the mappings ice-sheet models use.

import type { AttrValue } from "./netcdf-source.server.ts";

export type ProjectionResult = { ok: true; proj4: string } | { ok: false; message: string };

const num = (a: Record<string, AttrValue>, k: string): number | undefined => {
  const v = a[k];
  if (typeof v === "number") return v;
  if (Array.isArray(v) && typeof v[0] === "number") return v[0];
  if (typeof v === "string" && v.trim() !== "" && Number.isFinite(Number(v))) return Number(v);
  return undefined;
};

function ellipsoid(a: Record<string, AttrValue>): string {
  const major = num(a, "semi_major_axis");
  const invF = num(a, "inverse_flattening");
  const minor = num(a, "semi_minor_axis");
  const radius = num(a, "earth_radius");
  if (radius !== undefined) return `+R=${radius}`;
  if (major !== undefined && invF !== undefined) return invF === 0 ? `+R=${major}` : `+a=${major} +rf=${invF}`;
  if (major !== undefined && minor !== undefined) return `+a=${major} +b=${minor}`;
  return "+datum=WGS84";
}

function falseOrigin(a: Record<string, AttrValue>): string {
  return `+x_0=${num(a, "false_easting") ?? 0} +y_0=${num(a, "false_northing") ?? 0}`;
}

export function cfToProj4(attrs: Record<string, AttrValue>): ProjectionResult {
  for (const k of ["proj4", "proj4text", "proj4_params", "proj4string"]) {
    if (typeof attrs[k] === "string" && /\+proj=/.test(attrs[k] as string)) return { ok: true, proj4: attrs[k] as string };
  }
  const name = typeof attrs.grid_mapping_name === "string" ? attrs.grid_mapping_name : "";
  const tail = `${falseOrigin(attrs)} ${ellipsoid(attrs)} +units=m +no_defs`;
  switch (name) {
    case "polar_stereographic": {
      const lat0 = num(attrs, "latitude_of_projection_origin");
      const lon0 = num(attrs, "straight_vertical_longitude_from_pole") ?? num(attrs, "longitude_of_projection_origin") ?? 0;
      if (lat0 === undefined || Math.abs(Math.abs(lat0) - 90) > 1e-9) {
        return { ok: false, message: "A polar_stereographic grid mapping needs latitude_of_projection_origin of 90 or −90." };
      }
      const ts = num(attrs, "standard_parallel");
      const k0 = num(attrs, "scale_factor_at_projection_origin");
      const scale = ts !== undefined ? `+lat_ts=${ts}` : `+k_0=${k0 ?? 1}`;
      return { ok: true, proj4: `+proj=stere +lat_0=${lat0} +lon_0=${lon0} ${scale} ${tail}` };
    }
    case "stereographic":
      return {
        ok: true,
        proj4: `+proj=stere +lat_0=${num(attrs, "latitude_of_projection_origin") ?? 0} +lon_0=${num(attrs, "longitude_of_projection_origin") ?? 0} +k_0=${num(attrs, "scale_factor_at_projection_origin") ?? 1} ${tail}`,
      };
    case "lambert_azimuthal_equal_area":
      return {
        ok: true,
        proj4: `+proj=laea +lat_0=${num(attrs, "latitude_of_projection_origin") ?? 0} +lon_0=${num(attrs, "longitude_of_projection_origin") ?? 0} ${tail}`,
      };
    case "transverse_mercator":
      return {
        ok: true,
        proj4: `+proj=tmerc +lat_0=${num(attrs, "latitude_of_projection_origin") ?? 0} +lon_0=${num(attrs, "longitude_of_central_meridian") ?? 0} +k_0=${num(attrs, "scale_factor_at_central_meridian") ?? 1} ${tail}`,
      };
    case "lambert_conformal_conic":
    case "albers_conical_equal_area": {
      const sp = attrs.standard_parallel;
      const [p1, p2] = Array.isArray(sp) ? sp : [num(attrs, "standard_parallel") ?? 0, num(attrs, "standard_parallel") ?? 0];
      const proj = name === "lambert_conformal_conic" ? "lcc" : "aea";
      return {
        ok: true,
        proj4: `+proj=${proj} +lat_1=${p1} +lat_2=${p2 ?? p1} +lat_0=${num(attrs, "latitude_of_projection_origin") ?? 0} +lon_0=${num(attrs, "longitude_of_central_meridian") ?? 0} ${tail}`,
      };
    }
    case "latitude_longitude":
      return { ok: true, proj4: "+proj=longlat +datum=WGS84 +no_defs" };
    default:
      return {
        ok: false,
        message: name
          ? `The grid mapping "${name}" is not one Thawline can convert (polar_stereographic, stereographic, lambert_azimuthal_equal_area, transverse_mercator, lambert_conformal_conic, albers_conical_equal_area).`
          : "The grid mapping variable has no grid_mapping_name (nor a proj4 attribute), so the projection is unknown.",
      };
  }
}
