import { createRequire } from 'node:module';
import { describe, expect, it } from 'vitest';
import { renderStory, sanitizeStoryHtml } from '@shared/stories/render';

// jsdom ships no type declarations; only its constructor and window.document are used here.
const { JSDOM } = createRequire(import.meta.url)('jsdom') as { JSDOM: new (html: string) => { window: { document: Document } } };

/*
 * Hostile bodies. The HTML vectors are from the OWASP XSS Filter Evasion Cheat Sheet
 * (OWASP/CheatSheetSeries, cheatsheets/XSS_Filter_Evasion_Cheat_Sheet.md, read for this test, not
 * recalled) and from DOMPurify's own test fixtures (cure53/DOMPurify, test/fixtures/expect.mjs,
 * titles quoted). Markdown forms carry the same payloads through links, images, titles and claim
 * targets. Every output is parsed with jsdom and checked for what could run.
 */

const owaspVectors: [string, string][] = [
  ['Basic XSS test', '<SCRIPT SRC=https://cdn.example/xss.js></SCRIPT>'],
  ['XSS locator (polyglot)', 'javascript:/*--></title></style></textarea></script></xmp><svg/onload=\'+/"`/+/onmouseover=1/+/[*/[]/+alert(42);//\'>'],
  ['Malformed A tags', '<a onmouseover="alert(document.cookie)">xxs link</a>'],
  ['Malformed IMG tags', '<IMG """><SCRIPT>alert("XSS")</SCRIPT>">'],
  ['fromCharCode', '<IMG SRC=javascript:alert(String.fromCharCode(88,83,83))>'],
  ['On error alert', '<IMG SRC=/ onerror="alert(String.fromCharCode(88,83,83))"></img>'],
  ['IMG onerror and JavaScript alert encode', '<img src=x onerror="&#0000106&#0000097&#0000118&#0000097&#0000115&#0000099&#0000114&#0000105&#0000112&#0000116&#0000058&#0000097&#0000108&#0000101&#0000114&#0000116&#0000040&#0000039&#0000088&#0000083&#0000083&#0000039&#0000041">'],
  ['Decimal HTML character references', '<IMG SRC=&#106;&#97;&#118;&#97;&#115;&#99;&#114;&#105;&#112;&#116;&#58;&#97;&#108;&#101;&#114;&#116;&#40;&#39;&#88;&#83;&#83;&#39;&#41;>'],
  ['Hexadecimal HTML character references without trailing semicolons', '<IMG SRC=&#x6A&#x61&#x76&#x61&#x73&#x63&#x72&#x69&#x70&#x74&#x3A&#x61&#x6C&#x65&#x72&#x74&#x28&#x27&#x58&#x53&#x53&#x27&#x29>'],
  ['Embedded tab', '<IMG SRC="jav\tascript:alert(\'XSS\');">'],
  ['Embedded encoded newline', '<IMG SRC="jav&#x0A;ascript:alert(\'XSS\');">'],
  ['Spaces and meta chars before the JavaScript', '<IMG SRC=" &#14;  javascript:alert(\'XSS\');">'],
  ['Non-alpha-non-digit XSS', '<SCRIPT/XSS SRC="http://xss.example/xss.js"></SCRIPT>'],
  ['Extraneous open brackets', '<<SCRIPT>alert("XSS");//\\<</SCRIPT>'],
  ['VBscript in an image', '<IMG SRC=\'vbscript:msgbox("XSS")\'>'],
  ['SVG object tag', '<svg/onload=alert(\'XSS\')>'],
  ['BODY tag', '<BODY ONLOAD=alert(\'XSS\')>'],
  ['STYLE attribute that breaks up an expression', '<IMG STYLE="xss:expr/*XSS*/ession(alert(\'XSS\'))">'],
  ['DIV expression', '<DIV STYLE="width: expression(alert(\'XSS\'));">'],
  ['META', '<META HTTP-EQUIV="refresh" CONTENT="0;url=javascript:alert(\'XSS\');">'],
  ['IFRAME', '<IFRAME SRC="javascript:alert(\'XSS\');"></IFRAME>'],
  ['IFRAME event based', '<IFRAME SRC=# onmouseover="alert(document.cookie)"></IFRAME>'],
  ['TABLE', '<TABLE BACKGROUND="javascript:alert(\'XSS\')">'],
  ['BASE tag', '<BASE HREF="javascript:alert(\'XSS\');//">'],
  ['OBJECT tag', '<OBJECT TYPE="text/x-scriptlet" DATA="http://xss.example/scriptlet.html"></OBJECT>'],
  ['EMBED SVG which contains XSS vector', '<EMBED SRC="data:image/svg+xml;base64,PHN2ZyB4bWxucz0iaHR0cDovL3d3dy53My5vcmcvMjAwMC9zdmciPjxzY3JpcHQ+YWxlcnQoMSk8L3NjcmlwdD48L3N2Zz4=" type="image/svg+xml" AllowScriptAccess="always"></EMBED>'],
  ['INPUT image', '<INPUT TYPE="IMAGE" SRC="javascript:alert(\'XSS\');">'],
];

const dompurifyVectors: [string, string][] = [
  ['JavaScript URIs using Unicode LS/PS I', "123<a href='\u2028javascript:alert(1)'>I am a dolphin!</a>"],
  ['JavaScript URIs using Unicode Whitespace', "123<a href=' javascript:alert(1)'>CLICK</a><a href='&#xA0javascript:alert(1)'>CLICK</a><a href='&#x3000;javascript:alert(1)'>CLICK</a>"],
  ['Link with data URI href', '<a href=data:,evilnastystuff>clickme</a>'],
  ['onclick, onsubmit, onfocus; DOM clobbering: parentNode', '<div onclick=alert(0)><form onsubmit=alert(1)><input onfocus=alert(2) name=parentNode>123</form></div>'],
  ['mXSS Variation II', "<img src=x id/=' onerror=alert(1)//'>"],
  ['Textarea and comments enabling img element', '<textarea>@shafigullin</textarea><!--</textarea><img src=x onerror=alert(1)>-->'],
  ['Img element inside noscript terminated inside comment', '<b><noscript><!-- </noscript><img src=x onerror=alert(1) --></noscript>'],
  ['Low-range-ASCII obfuscated JavaScript URI', '<a href="\u0001java\u0003script:alert(1)">@shafigullin<a>'],
  ['Iframe inside option element', '<option><iframe></select><b><script>alert(1)</script>'],
  ['Image after style to trick jQuery tag-completion', '<b><style><style/><img src=x onerror=alert(1)>'],
  ['MathML', '<math><mi xlink:href="javascript:alert(1)">x</mi><maction actiontype="statusline#http://evil">y</maction></math>'],
  ['SVG with script', '<svg><script>alert(1)</script></svg>'],
];

const markdownVectors: [string, string][] = [
  ['javascript: link', '[click](javascript:alert(1))'],
  ['mixed-case javascript: link', '[click](JaVaScRiPt:alert(1))'],
  ['entity-encoded javascript: link', '[click](&#106;avascript:alert(1))'],
  ['hex-entity javascript: link', '[click](&#x6A;&#x61;vascript:alert(1))'],
  ['percent-encoded javascript: link', '[click](%6A%61vascript:alert(1))'],
  ['javascript: link behind a tab', '[click](<\tjavascript:alert(1)>)'],
  ['vbscript: link', '[click](vbscript:msgbox("XSS"))'],
  ['data: link', '[click](data:text/html;base64,PHNjcmlwdD5hbGVydCgxKTwvc2NyaXB0Pg==)'],
  ['data: image', '![x](data:image/svg+xml;base64,PHN2ZyBvbmxvYWQ9YWxlcnQoMSk+)'],
  ['javascript: image', '![x](javascript:alert(1))'],
  ['reference definition to javascript:', '[click][evil]\n\n[evil]: javascript:alert(1)'],
  ['autolink to javascript:', '<javascript:alert(1)>'],
  ['link title breaking out', '[x](https://example.com "a\\" onmouseover=\\"alert(1)")'],
  ['image alt breaking out', '![a" onerror="alert(1)](/api/story-images/1)'],
  ['claim target carrying a payload', '[x](clearance:a"onmouseover=alert(1))'],
  ['claim target with a script in the key', '[x](reading:<script>alert(1)</script>)'],
  ['broken claim target carrying markup', '[x](clearence:"><img src=x onerror=alert(1)>)'],
  ['caution kind carrying markup', ':::caution "><script>alert(1)</script>\nbody\n:::'],
  ['raw HTML in a caution', ':::caution machining\n<svg onload=alert(1)>\n:::'],
  ['code fence info string', '```"><script>alert(1)</script>\ncode\n```'],
  ['protocol-relative link', '[x](//evil.example/x)'],
  ['backslash host link', '[x](/\\evil.example/x)'],
];

const FORBIDDEN_ELEMENTS = ['script', 'svg', 'math', 'iframe', 'frame', 'frameset', 'object', 'embed', 'form', 'input', 'button', 'textarea', 'select', 'option', 'style', 'link', 'meta', 'base', 'noscript', 'template'];

/** What could run or load elsewhere in the parsed output; empty when the output is safe. */
function dangers(html: string): string[] {
  const doc = new JSDOM(`<!DOCTYPE html><body>${html}</body>`).window.document;
  const found: string[] = [];
  for (const tag of FORBIDDEN_ELEMENTS) if (doc.body.querySelector(tag)) found.push(`<${tag}>`);
  for (const el of doc.body.querySelectorAll('*')) {
    for (const attr of el.attributes) {
      const name = attr.name.toLowerCase();
      if (name.startsWith('on')) found.push(`${el.tagName} ${name}`);
      if (name === 'style') found.push(`${el.tagName} style`);
      if (['href', 'src', 'action', 'formaction', 'xlink:href', 'background', 'data', 'srcset'].includes(name)) {
        // Browsers skip leading control characters and spaces before a scheme (WHATWG URL parsing).
        const value = [...attr.value].filter((c) => c > ' ' && !/[\s\u180e\u200b\ufeff]/u.test(c)).join('');
        const allowed = /^https?:\/\//i.test(value) || /^\/(?![/\\])/.test(value) || /^#claim-/.test(value) || /^#[\w-]*$/.test(value);
        if (!allowed) found.push(`${el.tagName} ${name}=${attr.value}`);
      }
    }
  }
  return found;
}

describe('hostile story bodies render to nothing that can run', () => {
  it.each([...owaspVectors, ...dompurifyVectors, ...markdownVectors])('%s', (_title, body) => {
    expect(dangers(renderStory(body).html)).toEqual([]);
  });

  it('the checker itself finds what it looks for', () => {
    // Guards the assertion above: unsanitized HTML with each danger is reported.
    expect(dangers('<script>1</script><svg></svg><a href="javascript:x" onclick="y">z</a><img src="data:x" style="a">')).toEqual([
      '<script>',
      '<svg>',
      'A href=javascript:x',
      'A onclick',
      'IMG src=data:x',
      'IMG style',
    ]);
  });
});

describe('the sanitizer alone stops the published HTML vectors', () => {
  // Raw HTML never reaches it from a body (markdown-it escapes it); this checks the last gate by itself.
  it.each([...owaspVectors, ...dompurifyVectors])('%s', (_title, html) => {
    expect(dangers(sanitizeStoryHtml(html))).toEqual([]);
  });

  it('keeps what our renderer makes', () => {
    const ours =
      '<p><a class="claim" data-claim="clearance:end-float" data-claim-state="ok" href="#claim-clearance-end-float">x</a> <span class="claim-broken" data-claim-broken="clearence:x">y</span> <a href="https://example.com/" rel="nofollow noopener noreferrer">z</a></p><aside class="caution" data-caution="machining" role="note"><p class="caution-title">Machining</p></aside><img src="/api/story-images/3" alt="pump">';
    expect(sanitizeStoryHtml(ours)).toBe(ours);
  });
});
