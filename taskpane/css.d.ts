/** webpack loads .css as text (asset/source); the pane puts it in a <style> element. */
declare module "*.css" {
  const text: string;
  export default text;
}
