import { zipSync, strToU8 } from "fflate";
import { describe, expect, it } from "vitest";
import { sniffBytes, zipEntryNames } from "#app/models/files/sniff.server.ts";

// Content sniffing for uploads (issue 14, file intake): the kind comes from the bytes, not the name.
const sniff = (bytes: Uint8Array | string) => {
  const buf = typeof bytes === "string" ? Buffer.from(bytes, "utf8") : Buffer.from(bytes);
  return sniffBytes(buf.subarray(0, 65536), buf, buf.length);
};

describe("sniffBytes", () => {
  it("tells an xlsx workbook from another zip archive by its directory", () => {
    const workbook = zipSync({ "[Content_Types].xml": strToU8("<Types/>"), "xl/workbook.xml": strToU8("<workbook/>") });
    expect(sniff(workbook).kind).toBe("xlsx");
    const other = zipSync({ "readme.txt": strToU8("hello") });
    const s = sniff(other);
    expect(s.kind).toBe("zip");
    expect(s.entries).toEqual(["readme.txt"]);
  });

  it("reads a zip directory from the tail alone", () => {
    const zip = Buffer.from(zipSync({ "a.txt": strToU8("a"), "b/c.xml": strToU8("c") }));
    expect(zipEntryNames(zip)).toEqual(["a.txt", "b/c.xml"]);
    expect(zipEntryNames(Buffer.from("not a zip at all, no end record"))).toBeNull();
  });

  it("recognises NetCDF-3 classic and 64-bit offset, and HDF5 at 0 or 512", () => {
    expect(sniff(new Uint8Array([0x43, 0x44, 0x46, 0x01, 0, 0, 0, 0])).kind).toBe("netcdf3");
    expect(sniff(new Uint8Array([0x43, 0x44, 0x46, 0x02, 0, 0, 0, 0])).kind).toBe("netcdf3");
    expect(sniff(new Uint8Array([0x43, 0x44, 0x46, 0x07, 0, 0, 0, 0])).kind).not.toBe("netcdf3");
    const hdf = [0x89, 0x48, 0x44, 0x46, 0x0d, 0x0a, 0x1a, 0x0a];
    expect(sniff(new Uint8Array([...hdf, 0, 0])).kind).toBe("hdf5");
    const later = new Uint8Array(600);
    later.set(hdf, 512);
    expect(sniff(later).kind).toBe("hdf5");
  });

  it("finds GeoJSON, plain JSON and CSV text with its encoding", () => {
    expect(sniff('  {"type": "FeatureCollection", "features": []}').kind).toBe("geojson");
    expect(sniff('{"a": 1}').kind).toBe("json");
    const csv = sniff("lab_code,age\nAB-1,1200\n");
    expect(csv).toMatchObject({ kind: "csv", encoding: "utf-8", bom: false });
    expect(sniff("\ufefflab_code,site\nAB-1,Ørsted\n")).toMatchObject({ kind: "csv", encoding: "utf-8", bom: true });
    expect(sniff(Buffer.from("lab_code,site\nAB-1,\xd8rsted\n", "latin1")).encoding).toBe("windows-1252");
    expect(sniff(Buffer.from("\ufefflab,age\n", "utf16le"))).toMatchObject({ kind: "csv", encoding: "utf-16le" });
  });

  it("does not call UTF-8 broken when the sample cuts a character in two", () => {
    const text = Buffer.from(`${"a".repeat(65535)}é and more`, "utf8");
    expect(sniffBytes(text.subarray(0, 65536), text, text.length).encoding).toBe("utf-8");
  });

  it("names what it is when it is not taken: PDF, images, old Excel, binary, empty", () => {
    expect(sniff("%PDF-1.7\n")).toMatchObject({ kind: "other", describe: "a PDF" });
    expect(sniff(new Uint8Array([0xd0, 0xcf, 0x11, 0xe0, 1, 2])).describe).toMatch(/old-style Excel/);
    expect(sniff(new Uint8Array([1, 2, 3, 0, 5])).kind).toBe("binary");
    expect(sniff(new Uint8Array([])).kind).toBe("empty");
  });
});
