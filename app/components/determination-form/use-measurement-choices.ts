import { useMemo, useState } from "react";
import type { FormOptions } from "#app/utils/submission-form.ts";

/*
 * The choices that decide which parts of the form show: method, material, curve and how the
 * radiocarbon result was reported. Choosing one may adjust another (a marine material picks a
 * marine curve; another method clears a material it does not take).
 */
export function useMeasurementChoices(
  options: FormOptions,
  start: (name: string) => string | undefined,
  defaultValue: Record<string, string>,
) {
  const [method, setMethod] = useState(start("method") || "radiocarbon");
  const [material, setMaterial] = useState(start("material") ?? "");
  const [curve, setCurve] = useState(start("curve") ?? "");
  const [c14Input, setC14Input] = useState(defaultValue.c14_age === "" && defaultValue.f14c ? "f14c" : "age");

  const marineMaterials = useMemo(() => new Set(options.materials.filter((m) => m.marine).map((m) => m.name)), [options]);
  const marineCurves = useMemo(() => options.curves.filter((c) => c.kind === "marine"), [options]);
  const isMarine = marineMaterials.has(material) || marineCurves.some((c) => c.name === curve);
  const materialsForMethod = options.materials.filter((m) => m.methods.includes(method));

  function chooseMaterial(name: string) {
    setMaterial(name);
    // Marine material is calibrated on a marine curve; pick one so the contributor need not.
    if (marineMaterials.has(name) && !marineCurves.some((c) => c.name === curve) && marineCurves[0]) {
      setCurve(marineCurves[0].name);
    } else if (!marineMaterials.has(name) && marineCurves.some((c) => c.name === curve)) {
      setCurve("");
    }
  }

  function chooseMethod(next: string) {
    setMethod(next);
    // A material of the other method would only be refused; let the contributor choose again.
    if (material && !options.materials.some((m) => m.name === material && m.methods.includes(next))) chooseMaterial("");
  }

  return {
    method,
    chooseMethod,
    material,
    chooseMaterial,
    curve,
    setCurve,
    c14Input,
    setC14Input,
    isMarine,
    marineCurves,
    materialsForMethod,
  };
}

export type MeasurementChoices = ReturnType<typeof useMeasurementChoices>;
