package ingest

// Message templates. A message is split into words at spaces; the
// variable words are masked (numbers <num>, hexadecimal <hex>, UUIDs
// <uuid>, IP addresses <ip>, quoted strings <str>, paths <path>, URLs
// <url>; digit runs inside other words <num>), and the masked word lists
// are merged on the fly in a Drain-style fixed-depth tree (He, Zhu, Zheng
// and Lyu, "Drain: An Online Log Parsing Approach with Fixed Depth Tree",
// ICWS 2017): messages are grouped by word count, then by their first
// templateDepth words, and within that leaf a message joins the group
// whose template it matches best if at least templateSimilarity of its
// words are equal; the words that differ become <*>. The companion value is
// the group's template at the time of the record.
//
// Memory is bounded: at most maxTemplates groups per field; a message that
// would need a new group past that keeps its masked text as its template.

const (
	templateDepth      = 2   // words below the length layer (Drain's depth 4 less root and length)
	templateSimilarity = 0.5 // Drain's similarity threshold st (the paper's 0.5, from memory)
	templateMaxChild   = 64  // children per tree node; more go under <*>
	maxTemplates       = 1000
	maxTemplateWords   = 64 // words past it are cut and "<…>" ends the template
)

const wildcard = "<*>"

// templater makes the templates of one field.
type templater struct {
	buf    []byte   // masked words, back to back
	words  [][]byte // slices of buf
	roots  map[int]*tnode
	groups int
	out    []byte
}

type tnode struct {
	children map[string]*tnode
	groups   []*tgroup
}

type tgroup struct {
	words []string
	text  []byte
}

func newTemplater() *templater { return &templater{roots: make(map[int]*tnode)} }

// template returns the template of msg; the slice is valid until the next
// call.
func (t *templater) template(msg []byte) []byte {
	t.mask(msg)
	n := len(t.words)
	root := t.roots[n]
	if root == nil {
		if t.groups >= maxTemplates {
			return t.masked()
		}
		root = &tnode{}
		t.roots[n] = root
	}
	node := root
	for d := 0; d < templateDepth && d < n; d++ {
		key := t.words[d]
		if hasDigit(key) || isMask(key) {
			key = wildcardBytes
		}
		child := node.children[string(key)]
		if child == nil {
			if t.groups >= maxTemplates {
				return t.masked()
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
	bestSim, bestWild := -1.0, -1
	for _, g := range node.groups {
		same, wild := 0, 0
		for i, w := range g.words {
			switch {
			case w == wildcard:
				wild++
			case w == string(t.words[i]):
				same++
			}
		}
		sim := 1.0
		if n > 0 {
			sim = float64(same) / float64(n)
		}
		if sim > bestSim || sim == bestSim && wild > bestWild {
			best, bestSim, bestWild = g, sim, wild
		}
	}
	if best != nil && bestSim >= templateSimilarity {
		changed := false
		for i, w := range best.words {
			if w != wildcard && w != string(t.words[i]) {
				best.words[i] = wildcard
				changed = true
			}
		}
		if changed {
			best.render()
		}
		return best.text
	}
	if t.groups >= maxTemplates {
		return t.masked()
	}
	g := &tgroup{words: make([]string, n)}
	for i, w := range t.words {
		g.words[i] = string(w)
	}
	g.render()
	node.groups = append(node.groups, g)
	t.groups++
	return g.text
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
func (t *templater) masked() []byte {
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
func (t *templater) mask(msg []byte) {
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
func (t *templater) maskQuoted(msg []byte, i, j int) (int, bool) {
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
func (t *templater) maskWord(w []byte) {
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

func (t *templater) maskCore(c []byte, kv bool) {
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

func isMask(b []byte) bool { return len(b) > 2 && b[0] == '<' && b[len(b)-1] == '>' }

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
