// The copy-paste examples of the constraints and releases API, as shown at /api-docs and as run by
// tests/e2e/api-examples.test.ts against the running app (so a shown example that stops working
// fails a test). Each expects THAWLINE_URL and, where a token is needed, THAWLINE_TOKEN in the
// environment. Client-safe (plain strings).

export type Example = { id: string; title: string; language: "bash" | "python"; code: string };

export function constraintExamples(releaseSlug: string): Example[] {
  return [
    {
      id: "curl-constraints-csv",
      title: "A region and time window as CSV (curl)",
      language: "bash",
      code: `curl -fsS -H "Authorization: Bearer $THAWLINE_TOKEN" \\
  "$THAWLINE_URL/api/v1/constraints?bbox=-80,50,-55,62&min_grade=2&from_cal_bp=9000&to_cal_bp=12000&format=csv" \\
  -o constraints.csv
head -3 constraints.csv`,
    },
    {
      id: "curl-constraints-polygon",
      title: "Select by a GeoJSON polygon: POST it to the same path (curl)",
      language: "bash",
      code: `cat > region.geojson <<'JSON'
{"type": "Polygon", "coordinates": [[[-80, 50], [-55, 50], [-55, 62], [-80, 62], [-80, 50]]]}
JSON
curl -fsS -H "Authorization: Bearer $THAWLINE_TOKEN" -H "Content-Type: application/geo+json" \\
  --data-binary @region.geojson "$THAWLINE_URL/api/v1/constraints?min_grade=1&format=json" \\
  | python3 -c 'import json, sys; print(json.load(sys.stdin)["count"], "constraints in the polygon")'`,
    },
    {
      id: "curl-releases",
      title: "List the releases and download one (curl, no token needed)",
      language: "bash",
      code: `curl -fsS "$THAWLINE_URL/api/v1/releases" | python3 -c 'import json, sys; [print(r["slug"], r["count"], r["checksum"]) for r in json.load(sys.stdin)["releases"]]'
curl -fsS "$THAWLINE_URL/api/v1/releases/${releaseSlug}?format=csv" -o release.csv
curl -fsS "$THAWLINE_URL/api/v1/releases/${releaseSlug}?format=metadata" -o release.metadata.json`,
    },
    {
      id: "python-pandas-numpy",
      title: "Python: the CSV into pandas, the calendar densities into numpy",
      language: "python",
      code: `import io, os
import numpy as np
import pandas as pd
import requests

base = os.environ["THAWLINE_URL"]
auth = {"Authorization": "Bearer " + os.environ["THAWLINE_TOKEN"]}
query = {"bbox": "-80,50,-55,62", "min_grade": 2, "from_cal_bp": 9000, "to_cal_bp": 12000}

r = requests.get(base + "/api/v1/constraints", params={**query, "format": "csv"}, headers=auth, timeout=60)
r.raise_for_status()
table = pd.read_csv(io.StringIO(r.text))
print(len(table), "constraints; by grade:", table["grade"].value_counts().sort_index().to_dict())

data = requests.get(base + "/api/v1/constraints", params={**query, "densities": "true"}, headers=auth, timeout=120).json()
years = []
for c in data["constraints"]:
    d = c["density"]
    p = np.asarray(d["p"], dtype=float)
    cal_bp = d["start_cal_bp"] + d["step"] * np.arange(p.size)  # p[i] is the probability of year cal_bp[i]
    years.append((c["lab_code"], float(cal_bp[p.argmax()]), float(p.sum())))
print(years[:3])
assert len(years) == len(table) == data["count"]`,
    },
    {
      id: "python-checksum",
      title: "Python: check a release's checksum from its JSON download",
      language: "python",
      code: `import hashlib, json, os
from decimal import Decimal
import requests

def canonical(v):
    if isinstance(v, dict):
        return "{" + ",".join(json.dumps(k, ensure_ascii=False) + ":" + canonical(v[k]) for k in sorted(v)) + "}"
    if isinstance(v, list):
        return "[" + ",".join(canonical(x) for x in v) + "]"
    if v is None or isinstance(v, (bool, str)):
        return json.dumps(v, ensure_ascii=False)
    if isinstance(v, int):
        return str(v)
    if v.is_integer():
        return str(int(v))
    return format(Decimal(repr(v)), "f")

release = requests.get(os.environ["THAWLINE_URL"] + "/api/v1/releases/${releaseSlug}", params={"format": "json"}, timeout=60).json()
items = sorted(release["constraints"], key=lambda item: item["id"])
items = [{k: v for k, v in item.items() if k != "density"} for item in items]
digest = hashlib.sha256(canonical(items).encode("utf-8")).hexdigest()
print(digest == release["checksum"], digest)
assert digest == release["checksum"]`,
    },
  ];
}
