import { expect, it } from "vitest";
import { args, get, personWithSession } from "#tests/support/auth.ts";

const mapSites = await import("#app/routes/resources/map-sites.ts");

/*
 * The map page loads its data through a fetcher: React Router asks for /api/map-sites.data, reads
 * the loader's answer itself and sends it on in its own format. That answer must be plain JSON even
 * when the browser accepts brotli, or the map never draws; a direct request still gets the encoding.
 */

it("a fetcher's data request gets the plain body; a direct request the encoding it asked for", async () => {
  const { cookie } = await personWithSession(["modeller"]);
  const headers = { "Accept-Encoding": "br, gzip" };

  const viaFetcher = await mapSites.loader(args(get("/api/map-sites.data", { cookie, headers })));
  expect(viaFetcher.headers.get("Content-Encoding")).toBeNull();
  const data = (await viaFetcher.json()) as { sites: unknown };
  expect(Array.isArray(data.sites)).toBe(true);

  const direct = await mapSites.loader(args(get("/api/map-sites", { cookie, headers })));
  expect(direct.headers.get("Content-Encoding")).toBe("br");
});
