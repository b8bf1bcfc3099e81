package companion

// Message templates. A message is split into words at spaces; the
// variable words are masked (numbers <num>, hexadecimal <hex>, UUIDs
// <uuid>, IP addresses <ip>, quoted strings <str>, paths <path>, URLs
// <url>; digit runs inside other words <num>), and the masked word lists
// are merged on the fly in a Drain-style fixed-depth tree (He, Zhu, Zheng
// and Lyu, "Drain: An Online Log Parsing Approach with Fixed Depth Tree",
// ICWS 2017): messages are grouped by word count, then by their first
// templateDepth words (a word with a digit or a mask in it goes under <*>,
// so "relay7.quay.example:443" does not start a branch of its own), and
// within that leaf a message joins the group whose template it matches best
// if few enough of its words differ (allowedDiff: none for short messages,
// more as they grow); the words that differ become <*>.
//
// The companion value is the group's id ("#12"), fixed for the whole run
// when the group is made, so that a group's records are counted under one
// value however its text changes; Text gives the group's current text.
//
// Memory is bounded: at most maxTemplates groups per field; a message that
// would need a new group past that gets its masked text as its value.

const (
	templateDepth    = 2  // words below the length layer (Drain's depth 4 less root and length)
	templateMaxChild = 64 // children per tree node; more go under <*>
	maxTemplates     = 1000
	maxTemplateWords = 64 // words past it are cut and "<…>" ends the template
)

// allowedDiff is how many words of an n-word message may differ from a
// template it joins: none up to 4 words, then one more per 4 words (a fixed
// setting chosen on the labelled logs in testdata/; Drain's fixed 0.5 share
// merges short messages that differ in their one telling word).
func allowedDiff(n int) int {
	if n <= 4 {
		return 0
	}
	return (n - 1) / 4
}

const wildcard = "<*>"

// Templates is the FIELD~template companion: the templates of one field.
type Templates struct {
	source, name string
	buf          []byte   // masked words, back to back
	words        [][]byte // slices of buf
	roots        map[int]*tnode
	groups       []*tgroup // by id-1
	out          []byte
}

type tnode struct {
	children map[string]*tnode
	groups   []*tgroup
}

type tgroup struct {
	id    []byte // FormatID of its number
	words []string
	text  []byte
}

// NewTemplates returns the ~template companion of field source.
func NewTemplates(source string) *Templates {
	return &Templates{source: source, name: source + TemplateSuffix, roots: make(map[int]*tnode)}
}

func newTemplater() *Templates { return NewTemplates("") }

// Source implements Companion.
func (t *Templates) Source() string { return t.source }

// Name implements Companion.
func (t *Templates) Name() string { return t.name }

// Method implements Companion.
func (*Templates) Method() string {
	return "message template id: variable parts masked and merged"
}

// Value implements Companion: the id of msg's group.
func (t *Templates) Value(msg []byte) []byte {
	g := t.group(msg)
	if g == nil {
		return t.masked()
	}
	return g.id
}

// Groups is the number of groups made.
func (t *Templates) Groups() int { return len(t.groups) }

// Text is the current text of the group with the given id.
func (t *Templates) Text(id int) (string, bool) {
	if id < 1 || id > len(t.groups) {
		return "", false
	}
	return string(t.groups[id-1].text), true
}

// template returns the current text of msg's group (its masked text past
// the cap); the slice is valid until the next call.
func (t *Templates) template(msg []byte) []byte {
	g := t.group(msg)
	if g == nil {
		return t.masked()
	}
	return g.text
}

// group finds or makes msg's group; nil past the cap.
func (t *Templates) group(msg []byte) *tgroup {
	t.mask(msg)
	return t.groupWords()
}

// groupWords finds or makes the group of the masked words in t.words; nil
// past the cap.
func (t *Templates) groupWords() *tgroup {
	n := len(t.words)
	root := t.roots[n]
	if root == nil {
		if len(t.groups) >= maxTemplates {
			return nil
		}
		root = &tnode{}
		t.roots[n] = root
	}
	node := root
	for d := 0; d < templateDepth && d < n; d++ {
		key := t.words[d]
		if variableWord(key) {
			key = wildcardBytes
		}
		child := node.children[string(key)]
		if child == nil {
			if len(t.groups) >= maxTemplates {
				return nil
			}
			if node.children == nil {
				node.children = make(map[string]*tnode)
			}
			if len(node.children) >= templateMaxChild {
				key = wildcardBytes
				child = node.children[wildcard]
			}
			if child == nil {
				child = &tnode{}
				node.children[string(key)] = child
			}
		}
		node = child
	}
	var best *tgroup
	bestDiff, bestWild := n+1, -1
	for _, g := range node.groups {
		diff, wild := 0, 0
		for i, w := range g.words {
			switch {
			case w == wildcard:
				wild++
			case w != string(t.words[i]) && !(variableWord([]byte(w)) && variableWord(t.words[i])):
				// Two words that both hold variable parts (relay<num>.quay.example,
				// db<num>.berths.internal) are values of one slot, not a
				// difference.
				diff++
			}
		}
		if diff < bestDiff || diff == bestDiff && wild > bestWild {
			best, bestDiff, bestWild = g, diff, wild
		}
	}
	if best != nil && bestDiff <= allowedDiff(n) {
		if !best.same(t.words) {
			for i, w := range best.words {
				if w != wildcard && w != string(t.words[i]) {
					best.words[i] = wildcard
				}
			}
			best.render()
		}
		return best
	}
	if len(t.groups) >= maxTemplates {
		return nil
	}
	g := &tgroup{words: make([]string, n), id: []byte(FormatID(len(t.groups) + 1))}
	for i, w := range t.words {
		g.words[i] = string(w)
	}
	g.render()
	node.groups = append(node.groups, g)
	t.groups = append(t.groups, g)
	return g
}

// same says whether the group's words are words exactly.
func (g *tgroup) same(words [][]byte) bool {
	for i, w := range g.words {
		if w != wildcard && w != string(words[i]) {
			return false
		}
	}
	return true
}

// variableWord: a word with a digit or a mask in it.
func variableWord(w []byte) bool {
	for _, c := range w {
		if isDigit(c) || c == '<' {
			return true
		}
	}
	return false
}

var wildcardBytes = []byte(wildcard)

func (g *tgroup) render() {
	g.text = g.text[:0]
	for i, w := range g.words {
		if i > 0 {
			g.text = append(g.text, ' ')
		}
		g.text = append(g.text, w...)
	}
}

// masked joins the masked words, for a message that gets no group.
func (t *Templates) masked() []byte {
	t.out = t.out[:0]
	for i, w := range t.words {
		if i > 0 {
			t.out = append(t.out, ' ')
		}
		t.out = append(t.out, w...)
	}
	return t.out
}

// mask splits msg into words and masks the variable ones into t.words.
func (t *Templates) mask(msg []byte) {
	t.buf = t.buf[:0]
	t.words = t.words[:0]
	var ends [maxTemplateWords + 1]int
	nw := 0
	i, n := 0, len(msg)
	for i < n && nw <= maxTemplateWords {
		for i < n && (msg[i] == ' ' || msg[i] == '\t') {
			i++
		}
		if i >= n {
			break
		}
		if nw == maxTemplateWords {
			t.buf = append(t.buf, "<…>"...)
			ends[nw] = len(t.buf)
			nw++
			break
		}
		j := i
		for j < n && msg[j] != ' ' && msg[j] != '\t' {
			j++
		}
		if e, ok := t.maskQuoted(msg, i, j); ok {
			j = e
		} else {
			t.maskWord(msg[i:j])
		}
		ends[nw] = len(t.buf)
		nw++
		i = j
	}
	start := 0
	for k := 0; k < nw; k++ {
		t.words = append(t.words, t.buf[start:ends[k]])
		start = ends[k]
	}
}

// maskQuoted masks a quoted string that starts the word msg[i:j] or
// follows its first "=", and which may hold spaces; it returns the end of
// the word that the closing quote is in.
func (t *Templates) maskQuoted(msg []byte, i, j int) (int, bool) {
	q := i
	if c := msg[q]; c != '"' && c != '\'' {
		eq := indexFrom(msg[:j], i, '=')
		if eq < 0 || eq+1 >= j || (msg[eq+1] != '"' && msg[eq+1] != '\'') {
			return 0, false
		}
		q = eq + 1
	}
	e := indexFrom(msg, q+1, msg[q])
	if e < 0 {
		return 0, false
	}
	t.buf = append(t.buf, msg[i:q]...)
	t.buf = append(t.buf, "<str>"...)
	j = e + 1
	for j < len(msg) && msg[j] != ' ' && msg[j] != '\t' {
		j++
	}
	t.buf = append(t.buf, msg[e+1:j]...)
	return j, true
}

func indexFrom(b []byte, from int, c byte) int {
	for k := from; k < len(b); k++ {
		if b[k] == c {
			return k
		}
	}
	return -1
}

// maskWord appends w to t.buf with its variable part masked.
func (t *Templates) maskWord(w []byte) {
	// Keep punctuation around the core: "(pid", "22.", "[1291]:".
	a, b := 0, len(w)
	for a < b && isOpenPunct(w[a]) {
		a++
	}
	for b > a && isClosePunct(w[b-1]) {
		b--
	}
	t.buf = append(t.buf, w[:a]...)
	t.maskCore(w[a:b], true)
	t.buf = append(t.buf, w[b:]...)
}

func (t *Templates) maskCore(c []byte, kv bool) {
	switch {
	case len(c) == 0:
	case isIPv4(c) || isIPv6(c):
		t.buf = append(t.buf, "<ip>"...)
	case isNumberWord(c):
		t.buf = append(t.buf, "<num>"...)
	case isUUID(c):
		t.buf = append(t.buf, "<uuid>"...)
	case isHex(c):
		t.buf = append(t.buf, "<hex>"...)
	case hasPrefix(c, "http://") || hasPrefix(c, "https://"):
		t.buf = append(t.buf, "<url>"...)
	case isPath(c):
		t.buf = append(t.buf, "<path>"...)
	default:
		if kv {
			if k := indexFrom(c, 1, '='); k > 0 {
				t.buf = append(t.buf, c[:k+1]...)
				t.maskCore(c[k+1:], false)
				return
			}
		}
		// Digit runs (with dots or commas between digits) inside a word.
		for i := 0; i < len(c); {
			if c[i] >= '0' && c[i] <= '9' {
				j := i + 1
				for j < len(c) && (isDigit(c[j]) || (c[j] == '.' || c[j] == ',') && j+1 < len(c) && isDigit(c[j+1])) {
					j++
				}
				t.buf = append(t.buf, "<num>"...)
				i = j
				continue
			}
			t.buf = append(t.buf, c[i])
			i++
		}
	}
}

func isDigit(c byte) bool { return c >= '0' && c <= '9' }

func isHexDigit(c byte) bool {
	return isDigit(c) || c >= 'a' && c <= 'f' || c >= 'A' && c <= 'F'
}

func isOpenPunct(c byte) bool { return c == '(' || c == '[' || c == '{' || c == '<' }

func isClosePunct(c byte) bool {
	switch c {
	case ')', ']', '}', '>', ',', ';', ':', '.', '!', '?':
		return true
	}
	return false
}

func hasDigit(b []byte) bool {
	for _, c := range b {
		if isDigit(c) {
			return true
		}
	}
	return false
}

func hasPrefix(b []byte, p string) bool { return len(b) >= len(p) && string(b[:len(p)]) == p }

// isNumberWord: a number with an optional sign, dots and commas between
// digits ("-12", "3.14", "1,024").
func isNumberWord(b []byte) bool {
	i := 0
	if b[0] == '-' || b[0] == '+' {
		i = 1
	}
	if i >= len(b) || !isDigit(b[i]) {
		return false
	}
	for ; i < len(b); i++ {
		c := b[i]
		if !isDigit(c) && !((c == '.' || c == ',') && i+1 < len(b) && isDigit(b[i+1])) {
			return false
		}
	}
	return true
}

// isUUID: 8-4-4-4-12 hexadecimal digits.
func isUUID(b []byte) bool {
	if len(b) != 36 {
		return false
	}
	for i, c := range b {
		if i == 8 || i == 13 || i == 18 || i == 23 {
			if c != '-' {
				return false
			}
		} else if !isHexDigit(c) {
			return false
		}
	}
	return true
}

// isIPv4: four dotted numbers of at most three digits, with an optional
// ":port" or "/prefix".
func isIPv4(b []byte) bool {
	parts, digits := 0, 0
	for i := 0; i < len(b); i++ {
		c := b[i]
		switch {
		case isDigit(c):
			digits++
			if digits > 3 {
				return false
			}
		case c == '.' && digits > 0 && parts < 3:
			parts++
			digits = 0
		case (c == ':' || c == '/') && parts == 3 && digits > 0:
			return isNumberWord(b[i+1:]) || i+1 == len(b)
		default:
			return false
		}
	}
	return parts == 3 && digits > 0
}

// isIPv6: hexadecimal groups with at least two colons and either "::" or
// a letter, so that times (12:30:05) are not taken for addresses.
func isIPv6(b []byte) bool {
	colons, letters := 0, 0
	double := false
	for i, c := range b {
		switch {
		case c == ':':
			colons++
			if i > 0 && b[i-1] == ':' {
				double = true
			}
		case c >= 'a' && c <= 'f' || c >= 'A' && c <= 'F':
			letters++
		case isDigit(c) || c == '.':
		default:
			return false
		}
	}
	return colons >= 2 && (double || letters > 0) && len(b) >= 2
}

// isHex: 0x and hexadecimal digits, or eight or more hexadecimal digits
// with at least one decimal digit.
func isHex(b []byte) bool {
	if len(b) > 2 && b[0] == '0' && (b[1] == 'x' || b[1] == 'X') {
		for _, c := range b[2:] {
			if !isHexDigit(c) {
				return false
			}
		}
		return true
	}
	if len(b) < 8 || !hasDigit(b) {
		return false
	}
	for _, c := range b {
		if !isHexDigit(c) {
			return false
		}
	}
	return true
}

// isPath: a Unix path (/, ~/, ./, ../), a Windows one (C:\, \\host).
func isPath(b []byte) bool {
	switch {
	case b[0] == '/' && len(b) > 1:
		return true
	case hasPrefix(b, "~/") || hasPrefix(b, "./") || hasPrefix(b, "../") || hasPrefix(b, `\\`):
		return true
	case len(b) > 2 && b[1] == ':' && b[2] == '\\':
		return true
	}
	return false
}
