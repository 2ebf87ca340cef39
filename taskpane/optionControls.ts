/**
 * The pane's controls for engine options, made from the options table (src/engine/options.ts):
 * a number input with the table's range and default, a checkbox for yes/no, a list for a
 * choice. Each control's id is the option's name with "_" as "-" (kmax is "k-max"), its hint
 * the option's one-line meaning.
 */
import { optionSpec, readOptionValue, type OptionName, type OptionValue } from "../src/engine/options";
import { element } from "./dom";

export interface OptionControl {
  field: HTMLElement;
  input: HTMLInputElement | HTMLSelectElement;
  /** The control's value checked against the table; the table's default (and the control reset to it) when it is not acceptable. */
  read(): OptionValue;
  show(value: OptionValue): void;
}

export function controlId(name: OptionName): string {
  return name === "kmax" ? "k-max" : name.replace(/_/g, "-");
}

export function optionControl(name: OptionName, label: string): OptionControl {
  const spec = optionSpec(name);
  const id = controlId(name);
  const field = element("div", { class: spec.type === "yes/no" ? "field small check" : "field small" });
  const hint = element("span", { id: `${id}-hint`, class: "visually-hidden" }, `${spec.meaning[0].toUpperCase()}${spec.meaning.slice(1)}.`);
  let input: HTMLInputElement | HTMLSelectElement;
  if (spec.type === "yes/no") {
    input = element("input", { id, type: "checkbox", "aria-describedby": hint.id });
    input.checked = spec.default === true;
    field.append(input, element("label", { for: id }, label), hint);
  } else if (spec.type === "choice") {
    input = element("select", { id, "aria-describedby": hint.id });
    for (const choice of spec.choices!) input.appendChild(element("option", { value: choice }, choice));
    input.value = String(spec.default);
    field.append(element("label", { for: id }, label), input, hint);
  } else {
    const attributes: Record<string, string> = { id, type: "number", value: String(spec.default), "aria-describedby": hint.id };
    if (spec.type === "whole number") Object.assign(attributes, { min: String(spec.low), max: String(spec.high), step: "1" });
    input = element("input", attributes);
    field.append(element("label", { for: id }, label), input, hint);
  }
  const show = (value: OptionValue) => {
    if (input instanceof HTMLInputElement && input.type === "checkbox") input.checked = value === true;
    else input.value = String(value);
  };
  const read = (): OptionValue => {
    const raw = input instanceof HTMLInputElement && input.type === "checkbox" ? input.checked : input.value;
    const value = readOptionValue(spec, raw) ?? spec.default;
    show(value);
    return value;
  };
  return { field, input, read, show };
}
