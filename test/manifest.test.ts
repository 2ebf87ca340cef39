import { describe, expect, it } from "vitest";
import { readFileSync } from "node:fs";
import { join } from "node:path";
import { XMLParser } from "fast-xml-parser";

// The platform's online manifest validator cannot be reached from here, so this test
// checks the structure the add-in relies on. The element order is the one the
// OfficeApp (TaskPaneApp) schema requires, as listed in the platform's manifest reference.
const root = join(__dirname, "..");
const xml = readFileSync(join(root, "manifest.xml"), "utf8");
const parser = new XMLParser({ ignoreAttributes: false, attributeNamePrefix: "@", preserveOrder: false, removeNSPrefix: false });
const manifest = parser.parse(xml).OfficeApp;
const devServerPort = JSON.parse(readFileSync(join(root, "package.json"), "utf8")).config.dev_server_port;

/** Every value of an attribute anywhere in the tree. */
function collectAttributes(node: unknown, name: string, out: string[] = []): string[] {
  if (Array.isArray(node)) node.forEach((child) => collectAttributes(child, name, out));
  else if (node && typeof node === "object") {
    for (const [key, value] of Object.entries(node)) {
      if (key === `@${name}` && typeof value === "string") out.push(value);
      else collectAttributes(value, name, out);
    }
  }
  return out;
}

function asArray<T>(value: T | T[] | undefined): T[] {
  return value === undefined ? [] : Array.isArray(value) ? value : [value];
}

const resources = manifest.VersionOverrides.Resources;
const urlById = new Map<string, string>();
for (const group of ["bt:Images", "bt:Urls"]) {
  for (const entry of asArray(resources[group][group === "bt:Images" ? "bt:Image" : "bt:Url"]) as Record<string, string>[]) urlById.set(entry["@id"], entry["@DefaultValue"]);
}
const stringIds = new Set<string>();
for (const group of ["bt:ShortStrings", "bt:LongStrings"]) {
  for (const entry of asArray(resources[group]["bt:String"]) as Record<string, string>[]) stringIds.add(entry["@id"]);
}
const host = manifest.VersionOverrides.Hosts.Host;

describe("manifest.xml structure", () => {
  it("is an add-in-only task pane manifest for the Workbook host", () => {
    expect(manifest["@xsi:type"]).toBe("TaskPaneApp");
    expect(manifest.Hosts.Host["@Name"]).toBe("Workbook");
    expect(host["@xsi:type"]).toBe("Workbook");
    expect(manifest.Id).toMatch(/^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/);
  });

  it("keeps the top-level elements in the order the schema requires", () => {
    const order = ["Id", "Version", "ProviderName", "DefaultLocale", "DisplayName", "Description", "IconUrl", "HighResolutionIconUrl", "SupportUrl", "AppDomains", "Hosts", "Requirements", "DefaultSettings", "Permissions", "VersionOverrides"];
    const positions = order.map((name) => xml.indexOf(`<${name}`));
    positions.forEach((position) => expect(position).toBeGreaterThan(0));
    expect([...positions].sort((a, b) => a - b)).toEqual(positions);
    const inHost = ["<Runtimes>", "<AllFormFactors>", "<DesktopFormFactor>"].map((tag) => xml.indexOf(tag));
    expect([...inHost].sort((a, b) => a - b)).toEqual(inHost);
    const inDesktop = ["<GetStarted>", "<FunctionFile", '<ExtensionPoint xsi:type="PrimaryCommandSurface"'].map((tag) => xml.indexOf(tag));
    expect([...inDesktop].sort((a, b) => a - b)).toEqual(inDesktop);
  });

  it("declares every resid it references", () => {
    const referenced = collectAttributes(manifest.VersionOverrides.Hosts, "resid");
    expect(referenced.length).toBeGreaterThan(10);
    for (const id of referenced) expect(urlById.has(id) || stringIds.has(id), `resid ${id}`).toBe(true);
  });

  it("uses one shared runtime page for the runtime, the functions page, the ribbon and the task pane", () => {
    const runtime = host.Runtimes.Runtime;
    expect(runtime["@lifetime"]).toBe("long");
    const sharedUrl = urlById.get(runtime["@resid"]);
    const functions = host.AllFormFactors.ExtensionPoint;
    expect(functions["@xsi:type"]).toBe("CustomFunctions");
    expect(urlById.get(functions.Page.SourceLocation["@resid"])).toBe(sharedUrl);
    expect(urlById.get(host.DesktopFormFactor.FunctionFile["@resid"])).toBe(sharedUrl);
    const controls = asArray(host.DesktopFormFactor.ExtensionPoint.OfficeTab.Group.Control) as Record<string, any>[];
    const paneAction = controls.map((control) => control.Action).find((action) => action["@xsi:type"] === "ShowTaskpane");
    expect(urlById.get(paneAction.SourceLocation["@resid"])).toBe(sharedUrl);
    expect(manifest.DefaultSettings.SourceLocation["@DefaultValue"]).toBe(sharedUrl);
    // The function file and the metadata are served from the same origin as the page.
    const origin = new URL(sharedUrl as string).origin;
    expect(new URL(urlById.get(functions.Script.SourceLocation["@resid"]) as string).origin).toBe(origin);
    expect(urlById.get(functions.Script.SourceLocation["@resid"])).toMatch(/\/functions\.js$/);
    expect(urlById.get(functions.Metadata.SourceLocation["@resid"])).toMatch(/\/functions\.json$/);
  });

  it("names the function namespace SKEIN", () => {
    const namespaceId = host.AllFormFactors.ExtensionPoint.Namespace["@resid"];
    const entry = (asArray(resources["bt:ShortStrings"]["bt:String"]) as Record<string, string>[]).find((s) => s["@id"] === namespaceId);
    expect(entry?.["@DefaultValue"]).toBe("SKEIN");
  });

  it("points every URL at the dev-server port over https", () => {
    const withoutComments = xml.replace(/<!--[\s\S]*?-->/g, "");
    const urls = [...withoutComments.matchAll(/https?:\/\/[^"<\s]+/g)].map((match) => match[0]).filter((url) => !url.startsWith("http://schemas.microsoft.com") && !url.startsWith("http://www.w3.org"));
    expect(urls.length).toBeGreaterThan(8);
    for (const url of urls) {
      const parsed = new URL(url);
      expect(parsed.protocol, url).toBe("https:");
      expect(parsed.hostname, url).toBe("localhost");
      expect(Number(parsed.port), url).toBe(devServerPort);
    }
  });

  it("names icons that exist under assets/", () => {
    for (const [id, url] of urlById) {
      if (!id.startsWith("Icon.")) continue;
      const file = join(root, new URL(url).pathname);
      expect(() => readFileSync(file), file).not.toThrow();
    }
  });
});
