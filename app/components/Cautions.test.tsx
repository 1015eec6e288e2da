import { describe, expect, it } from "vitest";
import { renderToStaticMarkup } from "react-dom/server";
import { Cautions } from "./Cautions";

describe("Cautions", () => {
  it("states every caution of design §10 in plain words", () => {
    const html = renderToStaticMarkup(<Cautions />);
    // design §10 (practice): the five standing cautions
    expect(html).toContain("not evidence of absence");
    expect(html).toContain("local heritage law");
    expect(html).toContain("unexploded-ordnance");
    expect(html).toContain("Human remains");
    expect(html).toContain("Indigenous communities");
    expect(html.match(/<li>/g)).toHaveLength(5);
  });

  it("is labelled for assistive technology", () => {
    expect(renderToStaticMarkup(<Cautions compact />)).toMatch(/<aside aria-label="Cautions"/);
  });
});
