// Classic cross-site scripting vectors, each calling the test's canary __xss(n) if it ever runs
// as script. Collected from the OWASP XSS Filter Evasion Cheat Sheet and the PortSwigger XSS cheat
// sheet (common practice, no single source): tags with event handlers, javascript: URLs, comment
// and tag-breaking tricks, template-literal and template-engine syntax, entity and URL encodings,
// mixed case, and markup that only parses in foreign content (SVG, MathML).
/** Each calls __xss(n) if it ever runs as script. */
export const PAYLOADS: readonly string[] = [
  '<script>__xss(1)</script>',
  '<img src=x onerror=__xss(2)>',
  '<svg onload=__xss(3)>',
  '"><script>__xss(4)</script>',
  "'><img src=x onerror=__xss(5)>",
  '<iframe src="javascript:__xss(6)"></iframe>',
  'javascript:__xss(7)',
  '<a href="javascript:__xss(8)">open</a>',
  '<body onload=__xss(9)>',
  '<details open ontoggle=__xss(10)>',
  '<math><mtext><table><mglyph><style><img src=x onerror=__xss(11)>',
  '<!--<img src="--><img src=x onerror=__xss(12)//">',
  '${__xss(13)}',
  "{{constructor.constructor('__xss(14)')()}}",
  '<style>@import "javascript:__xss(15)";</style>',
  '<input autofocus onfocus=__xss(16)>',
  '<audio><source onerror=__xss(17)></audio>',
  '<object data="javascript:__xss(18)"></object>',
  '<embed src="javascript:__xss(19)">',
  '<form><button formaction=javascript:__xss(20)>go</button></form>',
  '<marquee onstart=__xss(21)>',
  '</textarea><script>__xss(22)</script>',
  '<img src=x:x onerror=&#x5f;&#x5f;xss(23)>',
  '<IMG SRC=JaVaScRiPt:__xss(24)>',
  '<svg><animate onbegin=__xss(25) attributeName=x dur=1s>',
  '<x onclick=__xss(26) id=x tabindex=1 autofocus onfocus=__xss(26)>',
  '<<SCRIPT>__xss(27);//<</SCRIPT>',
  '%3Cscript%3E__xss(28)%3C/script%3E',
  '<div style="background:url(javascript:__xss(29))">',
  '<template><script>__xss(30)</script></template><noscript><p title="</noscript><img src=x onerror=__xss(30)>">',
];
