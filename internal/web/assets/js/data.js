// data.js: reads of a programme the views share: surveys, runs, hole paths,
// live conversion, measurement lists. Everything derived comes from the server.

import { get, getAll, request, query, ApiError } from "./api.js";

const surveys = new Map();

// survey returns the hole's survey set, or null when it has none.
export async function survey(pid, holeId, fresh = false) {
  const key = `${pid}/${holeId}`;
  if (!fresh && surveys.has(key)) return surveys.get(key);
  let s = null;
  try {
    const r = await request("GET", `/v1/projects/${pid}/holes/${holeId}/survey`);
    s = { ...r.data, etag: r.etag };
  } catch (e) {
    if (!(e instanceof ApiError && e.status === 404)) throw e;
  }
  surveys.set(key, s);
  return s;
}

export async function runs(pid, holeId) {
  const r = await get(`/v1/projects/${pid}/holes/${holeId}/runs`);
  return (r.items || []).sort((a, b) => a.from - b.from);
}

// preview asks the server to orient unsaved measurements against the stored
// hole: the same hole model, corrections and runs as a saved measurement.
export async function preview(p, hole, measurements, signal) {
  const r = await request("POST", `/v1/projects/${p.id}/holes/${hole.id}/preview`, { body: { measurements }, signal });
  return r.data.results || [];
}

// holePath returns the desurveyed path of a hole from the server as points
// {depth, easting, northing, elevation, azimuth, dip, extrapolated,
// dogleg_severity}: regular steps (about 60 along the hole, 0.5 to 100
// length units apart) plus every survey station.
export async function holePath(p, hole, step) {
  step = step || hole.final_depth / 60;
  step = Math.min(100, Math.max(0.5, Math.round(step * 2) / 2));
  const r = await get(`/v1/projects/${p.id}/holes/${hole.id}/path${query({ step })}`);
  return (r.items || []).filter((q) => Number.isFinite(q.easting));
}

// measurements lists a project's measurements over a filter (all pages).
export function measurements(pid, filter = {}) {
  return getAll(`/v1/projects/${pid}/measurements`, filter);
}

// qaReport returns the QA report of the programme, or of one hole.
export function qaReport(pid, holeId, params = {}) {
  return get((holeId ? `/v1/projects/${pid}/holes/${holeId}/qa` : `/v1/projects/${pid}/qa`) + query(params));
}
