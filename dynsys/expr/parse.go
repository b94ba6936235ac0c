package expr

import (
	"fmt"
	"strconv"
	"unicode/utf8"
)

// A SyntaxError reports a formula that does not parse: where (Col, the
// 1-based column counted in characters) and what was expected there (Msg).
// Callers that show errors with their own prefix (file, line, formula) can
// use the fields instead of Error.
type SyntaxError struct {
	Formula string
	Col     int
	Msg     string
}

// Error returns "expr: column <Col>: <Msg>".
func (e *SyntaxError) Error() string {
	return fmt.Sprintf("expr: column %d: %s", e.Col, e.Msg)
}

// tokenKind classifies the tokens of the formula language.
type tokenKind uint8

const (
	tokEnd tokenKind = iota
	tokNum
	tokName
	tokSymbol // one of + - * / ^ ( ) , < <= > >=
)

// token is one lexical unit of a formula.
type token struct {
	kind tokenKind
	text string
	col  int // 1-based column in characters
}

// describe returns the token as named in error messages.
func (t token) describe() string {
	switch t.kind {
	case tokEnd:
		return "end of formula"
	case tokNum:
		return fmt.Sprintf("number %s", t.text)
	case tokName:
		return fmt.Sprintf("name %q", t.text)
	}
	return strconv.Quote(t.text)
}

// maxDepth bounds the nesting of parentheses, unary minus and powers so
// that a pathological formula fails with an error instead of exhausting
// the stack.
const maxDepth = 1000

// parser is a recursive-descent parser over the tokens of one formula.
type parser struct {
	src    string
	tokens []token
	pos    int
	depth  int
}

// Parse parses one formula of the language described in the package
// documentation. Errors are *SyntaxError. Parse never panics.
func Parse(src string) (*Node, error) {
	tokens, err := lex(src)
	if err != nil {
		return nil, err
	}
	p := &parser{src: src, tokens: tokens}
	n, err := p.comparison()
	if err != nil {
		return nil, err
	}
	if t := p.peek(); t.kind != tokEnd {
		if t.text == ")" {
			return nil, p.errorf(t.col, `found ")" with no matching "("`)
		}
		return nil, p.errorf(t.col, "expected an operator or end of formula, found %s", t.describe())
	}
	return n, nil
}

func (p *parser) errorf(col int, format string, args ...any) *SyntaxError {
	return &SyntaxError{Formula: p.src, Col: col, Msg: fmt.Sprintf(format, args...)}
}

func (p *parser) peek() token { return p.tokens[p.pos] }

func (p *parser) next() token {
	t := p.tokens[p.pos]
	if t.kind != tokEnd {
		p.pos++
	}
	return t
}

// isSymbol reports whether the next token is the symbol s.
func (p *parser) isSymbol(s string) bool {
	t := p.peek()
	return t.kind == tokSymbol && t.text == s
}

var comparisonOps = map[string]Op{"<": OpLess, "<=": OpLessEq, ">": OpGreater, ">=": OpGreaterEq}

// comparison = sum [ ("<" | "<=" | ">" | ">=") sum ]
func (p *parser) comparison() (*Node, error) {
	left, err := p.sum()
	if err != nil {
		return nil, err
	}
	t := p.peek()
	op, ok := comparisonOps[t.text]
	if t.kind != tokSymbol || !ok {
		return left, nil
	}
	p.next()
	right, err := p.sum()
	if err != nil {
		return nil, err
	}
	if t2 := p.peek(); t2.kind == tokSymbol && comparisonOps[t2.text] != 0 {
		return nil, p.errorf(t2.col, "comparisons do not chain: add parentheses, as in (a %s b) %s c", t.text, t2.text)
	}
	return &Node{Op: op, Args: []*Node{left, right}, Col: t.col}, nil
}

// sum = product { ("+" | "-") product }
func (p *parser) sum() (*Node, error) {
	left, err := p.product()
	if err != nil {
		return nil, err
	}
	for p.isSymbol("+") || p.isSymbol("-") {
		t := p.next()
		right, err := p.product()
		if err != nil {
			return nil, err
		}
		op := OpAdd
		if t.text == "-" {
			op = OpSub
		}
		left = &Node{Op: op, Args: []*Node{left, right}, Col: t.col}
	}
	return left, nil
}

// product = unary { ("*" | "/") unary }
func (p *parser) product() (*Node, error) {
	left, err := p.unary()
	if err != nil {
		return nil, err
	}
	for p.isSymbol("*") || p.isSymbol("/") {
		t := p.next()
		right, err := p.unary()
		if err != nil {
			return nil, err
		}
		op := OpMul
		if t.text == "/" {
			op = OpDiv
		}
		left = &Node{Op: op, Args: []*Node{left, right}, Col: t.col}
	}
	return left, nil
}

// unary = "-" unary | power. The negation of a number is folded into the
// number, so "-2" is one node and prints back as itself.
func (p *parser) unary() (*Node, error) {
	if !p.isSymbol("-") {
		return p.power()
	}
	t := p.next()
	if p.depth++; p.depth > maxDepth {
		return nil, p.errorf(t.col, "formula nested more than %d deep", maxDepth)
	}
	operand, err := p.unary()
	p.depth--
	if err != nil {
		return nil, err
	}
	if operand.Op == OpNum {
		return &Node{Op: OpNum, Value: -operand.Value, Col: t.col}, nil
	}
	return &Node{Op: OpNeg, Args: []*Node{operand}, Col: t.col}, nil
}

// power = primary [ "^" unary ]. Taking the exponent as a unary makes "^"
// right-associative (2^3^2 = 2^9) and accepts 2^-1.
func (p *parser) power() (*Node, error) {
	base, err := p.primary()
	if err != nil {
		return nil, err
	}
	if !p.isSymbol("^") {
		return base, nil
	}
	t := p.next()
	if p.depth++; p.depth > maxDepth {
		return nil, p.errorf(t.col, "formula nested more than %d deep", maxDepth)
	}
	exponent, err := p.unary()
	p.depth--
	if err != nil {
		return nil, err
	}
	return &Node{Op: OpPow, Args: []*Node{base, exponent}, Col: t.col}, nil
}

// primary = number | constant | name | function "(" args ")" | "(" comparison ")"
func (p *parser) primary() (*Node, error) {
	t := p.next()
	switch t.kind {
	case tokNum:
		v, err := strconv.ParseFloat(t.text, 64)
		if err != nil {
			return nil, p.errorf(t.col, "number %s is out of range", t.text)
		}
		return &Node{Op: OpNum, Value: v, Col: t.col}, nil
	case tokName:
		if v, ok := constants[t.text]; ok {
			if p.isSymbol("(") {
				return nil, p.errorf(t.col, "%q is a constant, not a function", t.text)
			}
			return &Node{Op: OpConst, Name: t.text, Value: v, Col: t.col}, nil
		}
		fn, isFunc := functions[t.text]
		if !isFunc {
			if p.isSymbol("(") {
				return nil, p.errorf(t.col, "unknown function %q (functions: %s)", t.text, functionNames())
			}
			return &Node{Op: OpName, Name: t.text, Col: t.col}, nil
		}
		return p.call(t, fn)
	case tokSymbol:
		if t.text == "(" {
			if p.depth++; p.depth > maxDepth {
				return nil, p.errorf(t.col, "formula nested more than %d deep", maxDepth)
			}
			n, err := p.comparison()
			p.depth--
			if err != nil {
				return nil, err
			}
			if !p.isSymbol(")") {
				return nil, p.errorf(p.peek().col, "expected \")\" to close \"(\" opened at column %d, found %s", t.col, p.peek().describe())
			}
			p.next()
			return n, nil
		}
	}
	return nil, p.errorf(t.col, `expected a number, a name, "-" or "(", found %s`, t.describe())
}

// call parses the parenthesised arguments of the function named by t.
func (p *parser) call(t token, fn function) (*Node, error) {
	if !p.isSymbol("(") {
		return nil, p.errorf(p.peek().col, "expected \"(\" after function name %q, found %s", t.text, p.peek().describe())
	}
	open := p.next()
	if p.depth++; p.depth > maxDepth {
		return nil, p.errorf(open.col, "formula nested more than %d deep", maxDepth)
	}
	defer func() { p.depth-- }()
	n := &Node{Op: OpCall, Name: t.text, Col: t.col}
	for {
		arg, err := p.comparison()
		if err != nil {
			return nil, err
		}
		n.Args = append(n.Args, arg)
		if p.isSymbol(",") {
			sep := p.next()
			if len(n.Args) == fn.arity {
				return nil, p.errorf(sep.col, "%s takes %s, found a further \",\"", t.text, plural(fn.arity, "argument"))
			}
			continue
		}
		if p.isSymbol(")") {
			closing := p.next()
			if len(n.Args) < fn.arity {
				return nil, p.errorf(closing.col, "%s takes %s, found %d", t.text, plural(fn.arity, "argument"), len(n.Args))
			}
			return n, nil
		}
		want := `")"`
		if len(n.Args) < fn.arity {
			want = `"," or ")"`
		}
		return nil, p.errorf(p.peek().col, "expected %s to close %s( opened at column %d, found %s", want, t.text, open.col, p.peek().describe())
	}
}

func plural(k int, noun string) string {
	if k == 1 {
		return "1 " + noun
	}
	return fmt.Sprintf("%d %ss", k, noun)
}

// lex splits src into tokens, ending with a tokEnd.
func lex(src string) ([]token, error) {
	var tokens []token
	col := 1
	for i := 0; i < len(src); {
		r, size := utf8.DecodeRuneInString(src[i:])
		start, startCol := i, col
		switch {
		case r == ' ' || r == '\t' || r == '\n' || r == '\r':
			i += size
			col++
			continue
		case isDigit(r) || r == '.':
			end, err := scanNumber(src, i)
			if err != "" {
				return nil, &SyntaxError{Formula: src, Col: col + utf8.RuneCountInString(src[i:end]), Msg: err}
			}
			tokens = append(tokens, token{tokNum, src[i:end], col})
			col += end - i
			i = end
			continue
		case isLetter(r):
			for i < len(src) && (isLetter(rune(src[i])) || isDigit(rune(src[i]))) {
				i++
			}
			tokens = append(tokens, token{tokName, src[start:i], startCol})
			col += i - start
			continue
		case r == '<' || r == '>':
			i++
			if i < len(src) && src[i] == '=' {
				i++
			}
			tokens = append(tokens, token{tokSymbol, src[start:i], startCol})
			col += i - start
			continue
		case r == '+' || r == '-' || r == '*' || r == '/' || r == '^' || r == '(' || r == ')' || r == ',':
			tokens = append(tokens, token{tokSymbol, string(r), col})
			i++
			col++
			continue
		}
		msg := fmt.Sprintf("unexpected character %q", string(r))
		switch {
		case r == utf8.RuneError && size == 1:
			msg = "invalid UTF-8 byte"
		case r == '=':
			msg = `unexpected character "=": the language has no equality; comparisons are <, <=, >, >=`
		}
		return nil, &SyntaxError{Formula: src, Col: col, Msg: msg}
	}
	tokens = append(tokens, token{tokEnd, "", col})
	return tokens, nil
}

// scanNumber scans digits [ "." digits ] [ ("e" | "E") [sign] digits ]
// starting at src[i], where at least one digit precedes or follows the
// point. It returns the end offset, or a message saying what was expected.
func scanNumber(src string, i int) (end int, msg string) {
	start, digits := i, 0
	for i < len(src) && isDigit(rune(src[i])) {
		i++
		digits++
	}
	if i < len(src) && src[i] == '.' {
		i++
		for i < len(src) && isDigit(rune(src[i])) {
			i++
			digits++
		}
	}
	if digits == 0 {
		return start, `expected a digit before or after "."`
	}
	if i < len(src) && (src[i] == 'e' || src[i] == 'E') {
		i++
		if i < len(src) && (src[i] == '+' || src[i] == '-') {
			i++
		}
		if i >= len(src) || !isDigit(rune(src[i])) {
			return i, "expected the digits of an exponent"
		}
		for i < len(src) && isDigit(rune(src[i])) {
			i++
		}
	}
	return i, ""
}

func isDigit(r rune) bool  { return '0' <= r && r <= '9' }
func isLetter(r rune) bool { return 'a' <= r && r <= 'z' || 'A' <= r && r <= 'Z' || r == '_' }
