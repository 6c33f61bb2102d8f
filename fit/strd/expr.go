package strd

import (
	"errors"
	"fmt"
	"math"
	"strconv"
	"strings"
)

// ErrSyntax classifies every expression error; the *SyntaxError wrapping it
// carries the position.
var ErrSyntax = errors.New("strd: expression syntax error")

// SyntaxError is an error in a model expression. Col is the 1-based byte
// column in Expr where the problem was found.
type SyntaxError struct {
	Expr string
	Col  int
	Msg  string
}

func (e *SyntaxError) Error() string {
	return fmt.Sprintf("strd: %q:%d: %s", e.Expr, e.Col, e.Msg)
}

// Unwrap returns ErrSyntax.
func (e *SyntaxError) Unwrap() error { return ErrSyntax }

// maxNesting bounds the nesting of parentheses, unary operators and powers,
// so that a hostile expression cannot exhaust the stack of the recursive
// parser.
const maxNesting = 200

// Expr is a parsed model expression f(x; b), compiled to a postfix program
// that is evaluated in forward-mode automatic differentiation: every value
// on the evaluation stack is a dual number (v, ∂v/∂b_1, ..., ∂v/∂b_k), so
// the gradient with respect to the parameters is exact to rounding (no
// truncation error, unlike finite differences). An Expr is immutable and
// safe for concurrent use.
//
// The grammar is that of the NIST model formulas as written in Python
// notation, with Python's precedence:
//
//	expr    = term { ("+" | "-") term }
//	term    = unary { ("*" | "/") unary }
//	unary   = ("-" | "+") unary | power
//	power   = primary [ "**" unary ]          (right-associative)
//	primary = number | name | func "(" expr ")" | "(" expr ")"
//	func    = "exp" | "log" | "sin" | "cos" | "arctan"
//
// so -x**2 is −(x²) and 2**-1 is 0.5. Names are the parameters, the
// predictors and the constants given to ParseExpr; pi is π unless a
// constant overrides it. log is the natural logarithm and arctan the
// principal value in radians.
type Expr struct {
	src   string
	root  *node
	code  []instr
	k     int // number of parameters
	np    int // number of predictors
	depth int // evaluation stack depth
}

type opcode uint8

const (
	opConst opcode = iota
	opParam
	opPred
	opNeg
	opAdd
	opSub
	opMul
	opDiv
	opPow
	opExp
	opLog
	opSin
	opCos
	opAtan
)

var funcs = map[string]opcode{"exp": opExp, "log": opLog, "sin": opSin, "cos": opCos, "arctan": opAtan}

var binSym = map[opcode]string{opAdd: "+", opSub: "-", opMul: "*", opDiv: "/", opPow: "**"}

type node struct {
	op   opcode
	idx  int     // parameter or predictor index
	val  float64 // constant value, rounded to float64
	lo   float64 // constant value − val, for the double-double evaluation
	name string  // name as written (parameters, predictors, constants)
	a, b *node
}

type instr struct {
	op  opcode
	idx int
	val float64
	lo  float64
}

// ParseExpr parses src. params names the parameters b_1..b_k in order,
// predictors the predictor variables in the order their values are passed
// to Eval, and constants any named constants (nil for none). A syntax
// error or an unknown name gives a *SyntaxError wrapping ErrSyntax.
func ParseExpr(src string, params, predictors []string, constants map[string]float64) (*Expr, error) {
	p := &parser{src: src, names: map[string]*node{"pi": {op: opConst, val: ddPi.hi, lo: ddPi.lo, name: "pi"}}}
	for name, v := range constants {
		n := &node{op: opConst, val: v, name: name}
		if name == "pi" && v == math.Pi {
			// A constant pi given to more digits than float64 holds
			// (Roszman1 states 31) is π: keep it in double-double.
			n.lo = ddPi.lo
		}
		p.names[name] = n
	}
	for i, name := range predictors {
		p.names[name] = &node{op: opPred, idx: i, name: name}
	}
	for j, name := range params {
		p.names[name] = &node{op: opParam, idx: j, name: name}
	}
	p.next()
	root, err := p.expr(0)
	if err != nil {
		return nil, err
	}
	if p.tok != tokEOF {
		return nil, p.errorf("unexpected %s", p.describe())
	}
	e := &Expr{src: src, root: root, k: len(params), np: len(predictors)}
	depth := 0
	e.compile(root, &depth)
	return e, nil
}

func (e *Expr) compile(n *node, depth *int) {
	switch n.op {
	case opConst, opParam, opPred:
		e.code = append(e.code, instr{op: n.op, idx: n.idx, val: n.val, lo: n.lo})
		*depth++
		e.depth = max(e.depth, *depth)
	case opNeg, opExp, opLog, opSin, opCos, opAtan:
		e.compile(n.a, depth)
		e.code = append(e.code, instr{op: n.op})
	default:
		e.compile(n.a, depth)
		e.compile(n.b, depth)
		e.code = append(e.code, instr{op: n.op})
		*depth--
	}
}

// String returns the expression fully parenthesised; parsing it again gives
// an expression with the same value and gradient everywhere.
func (e *Expr) String() string {
	var sb strings.Builder
	writeNode(&sb, e.root)
	return sb.String()
}

func writeNode(sb *strings.Builder, n *node) {
	switch n.op {
	case opConst:
		if n.name != "" {
			sb.WriteString(n.name)
		} else {
			sb.WriteString(strconv.FormatFloat(n.val, 'g', -1, 64))
		}
	case opParam, opPred:
		sb.WriteString(n.name)
	case opNeg:
		sb.WriteString("(-")
		writeNode(sb, n.a)
		sb.WriteString(")")
	case opExp, opLog, opSin, opCos, opAtan:
		for name, op := range funcs {
			if op == n.op {
				sb.WriteString(name)
			}
		}
		sb.WriteString("(")
		writeNode(sb, n.a)
		sb.WriteString(")")
	default:
		sb.WriteString("(")
		writeNode(sb, n.a)
		sb.WriteString(binSym[n.op])
		writeNode(sb, n.b)
		sb.WriteString(")")
	}
}

// NumParams returns the number of parameters the expression was parsed with.
func (e *Expr) NumParams() int { return e.k }

// Eval returns f(x; b) and, when grad is not nil, fills grad (length
// NumParams()) with ∂f/∂b. It allocates its stack; an Evaluator does not.
func (e *Expr) Eval(x, b, grad []float64) float64 {
	return e.NewEvaluator().Eval(x, b, grad)
}

// An Evaluator evaluates one Expr with preallocated stacks. It is not safe
// for concurrent use; make one per goroutine.
type Evaluator struct {
	e    *Expr
	val  []float64
	grad []float64 // depth × k, row per stack slot
	dds  []dd      // stack of the double-double evaluation
}

// NewEvaluator returns an Evaluator for e.
func (e *Expr) NewEvaluator() *Evaluator {
	return &Evaluator{e: e, val: make([]float64, e.depth), grad: make([]float64, e.depth*e.k), dds: make([]dd, e.depth)}
}

// evalDD returns f(x; b) in double-double arithmetic (value only), with the
// predictors given in double-double and the parameters in float64.
func (ev *Evaluator) evalDD(x []dd, b []float64) dd {
	e := ev.e
	if len(b) != e.k || len(x) != e.np {
		panic("strd: Evaluator.evalDD: wrong slice length")
	}
	st := ev.dds
	sp := 0
	for _, in := range e.code {
		switch in.op {
		case opConst:
			st[sp] = dd{in.val, in.lo}
			sp++
			continue
		case opParam:
			st[sp] = ddFrom(b[in.idx])
			sp++
			continue
		case opPred:
			st[sp] = x[in.idx]
			sp++
			continue
		}
		top := sp - 1
		a := st[top]
		switch in.op {
		case opNeg:
			st[top] = a.neg()
			continue
		case opExp:
			st[top] = ddExp(a)
			continue
		case opLog:
			st[top] = ddLog(a)
			continue
		case opSin:
			st[top], _ = ddSinCos(a)
			continue
		case opCos:
			_, st[top] = ddSinCos(a)
			continue
		case opAtan:
			st[top] = ddAtan(a)
			continue
		}
		l := sp - 2
		u := st[l]
		switch in.op {
		case opAdd:
			st[l] = u.add(a)
		case opSub:
			st[l] = u.sub(a)
		case opMul:
			st[l] = u.mul(a)
		case opDiv:
			st[l] = u.div(a)
		case opPow:
			st[l] = ddPow(u, a)
		}
		sp--
	}
	return st[0]
}

// Eval is Expr.Eval without allocation. It panics (prefixed "strd:") when
// len(x) or len(b) does not match the names given to ParseExpr, or grad is
// neither nil nor of length NumParams(): programmer errors.
func (ev *Evaluator) Eval(x, b, grad []float64) float64 {
	e, k := ev.e, ev.e.k
	if len(b) != k || len(x) != e.np || (grad != nil && len(grad) != k) {
		panic("strd: Evaluator.Eval: wrong slice length")
	}
	val, gs := ev.val, ev.grad
	sp := 0 // number of values on the stack
	for _, in := range e.code {
		switch in.op {
		case opConst, opParam, opPred:
			g := gs[sp*k : sp*k+k]
			clear(g)
			switch in.op {
			case opConst:
				val[sp] = in.val
			case opParam:
				val[sp] = b[in.idx]
				g[in.idx] = 1
			case opPred:
				val[sp] = x[in.idx]
			}
			sp++
			continue
		}
		top := sp - 1
		a, ga := val[top], gs[top*k:top*k+k]
		switch in.op {
		case opNeg:
			val[top] = -a
			for j := range ga {
				ga[j] = -ga[j]
			}
			continue
		case opExp:
			v := math.Exp(a)
			val[top] = v
			for j := range ga {
				ga[j] *= v
			}
			continue
		case opLog:
			val[top] = math.Log(a)
			for j := range ga {
				ga[j] /= a
			}
			continue
		case opSin:
			val[top] = math.Sin(a)
			c := math.Cos(a)
			for j := range ga {
				ga[j] *= c
			}
			continue
		case opCos:
			val[top] = math.Cos(a)
			s := -math.Sin(a)
			for j := range ga {
				ga[j] *= s
			}
			continue
		case opAtan:
			val[top] = math.Atan(a)
			d := 1 / (1 + a*a)
			for j := range ga {
				ga[j] *= d
			}
			continue
		}
		// Binary: left operand below, right operand on top.
		l := sp - 2
		u, gu := val[l], gs[l*k:l*k+k]
		v, gv := a, ga
		switch in.op {
		case opAdd:
			val[l] = u + v
			for j := range gu {
				gu[j] += gv[j]
			}
		case opSub:
			val[l] = u - v
			for j := range gu {
				gu[j] -= gv[j]
			}
		case opMul:
			val[l] = u * v
			for j := range gu {
				gu[j] = gu[j]*v + u*gv[j]
			}
		case opDiv:
			q := u / v
			val[l] = q
			for j := range gu {
				gu[j] = (gu[j] - q*gv[j]) / v
			}
		case opPow:
			// d(u^v) = v·u^(v−1)·du + u^v·ln(u)·dv; each term only where
			// its differential is nonzero, so that a constant exponent
			// never takes the logarithm of a negative base.
			pw := math.Pow(u, v)
			val[l] = pw
			var dpu, dpv float64
			haveU, haveV := false, false
			for j := range gu {
				g := 0.0
				if gu[j] != 0 {
					if !haveU {
						dpu = v * math.Pow(u, v-1)
						haveU = true
					}
					g += dpu * gu[j]
				}
				if gv[j] != 0 {
					if !haveV {
						dpv = pw * math.Log(u)
						haveV = true
					}
					g += dpv * gv[j]
				}
				gu[j] = g
			}
		}
		sp--
	}
	if grad != nil {
		copy(grad, gs[:k])
	}
	return val[0]
}

// Lexer and parser.

type token int

const (
	tokEOF token = iota
	tokNum
	tokName
	tokOp // + - * / ** ( )
	tokBad
)

type parser struct {
	src   string
	pos   int // byte offset after the current token
	start int // byte offset of the current token
	tok   token
	text  string
	num   float64
	names map[string]*node
}

func (p *parser) errorf(format string, args ...any) error {
	return &SyntaxError{Expr: p.src, Col: p.start + 1, Msg: fmt.Sprintf(format, args...)}
}

func (p *parser) describe() string {
	switch p.tok {
	case tokEOF:
		return "end of expression"
	case tokBad:
		return fmt.Sprintf("character %q", p.text)
	default:
		return fmt.Sprintf("%q", p.text)
	}
}

func (p *parser) next() {
	s := p.src
	for p.pos < len(s) && (s[p.pos] == ' ' || s[p.pos] == '\t') {
		p.pos++
	}
	p.start = p.pos
	if p.pos >= len(s) {
		p.tok, p.text = tokEOF, ""
		return
	}
	c := s[p.pos]
	switch {
	case c >= '0' && c <= '9' || c == '.':
		i := p.pos
		for i < len(s) && (s[i] >= '0' && s[i] <= '9' || s[i] == '.') {
			i++
		}
		if i < len(s) && (s[i] == 'e' || s[i] == 'E') {
			j := i + 1
			if j < len(s) && (s[j] == '+' || s[j] == '-') {
				j++
			}
			if j < len(s) && s[j] >= '0' && s[j] <= '9' {
				for j < len(s) && s[j] >= '0' && s[j] <= '9' {
					j++
				}
				i = j
			}
		}
		p.text = s[p.pos:i]
		p.pos = i
		v, err := strconv.ParseFloat(p.text, 64)
		if err != nil || math.IsInf(v, 0) {
			p.tok = tokBad
			return
		}
		p.tok, p.num = tokNum, v
	case c == '_' || c >= 'a' && c <= 'z' || c >= 'A' && c <= 'Z':
		i := p.pos
		for i < len(s) && (s[i] == '_' || s[i] >= 'a' && s[i] <= 'z' || s[i] >= 'A' && s[i] <= 'Z' || s[i] >= '0' && s[i] <= '9') {
			i++
		}
		p.tok, p.text = tokName, s[p.pos:i]
		p.pos = i
	case c == '*' && p.pos+1 < len(s) && s[p.pos+1] == '*':
		p.tok, p.text = tokOp, "**"
		p.pos += 2
	case strings.IndexByte("+-*/()", c) >= 0:
		p.tok, p.text = tokOp, s[p.pos:p.pos+1]
		p.pos++
	default:
		p.tok, p.text = tokBad, s[p.pos:p.pos+1]
		p.pos++
	}
}

func (p *parser) isOp(op string) bool { return p.tok == tokOp && p.text == op }

func (p *parser) expr(nest int) (*node, error) {
	if nest > maxNesting {
		return nil, p.errorf("expression nested more than %d deep", maxNesting)
	}
	n, err := p.term(nest)
	if err != nil {
		return nil, err
	}
	for p.isOp("+") || p.isOp("-") {
		op := opAdd
		if p.text == "-" {
			op = opSub
		}
		p.next()
		r, err := p.term(nest)
		if err != nil {
			return nil, err
		}
		n = &node{op: op, a: n, b: r}
	}
	return n, nil
}

func (p *parser) term(nest int) (*node, error) {
	n, err := p.unary(nest)
	if err != nil {
		return nil, err
	}
	for p.isOp("*") || p.isOp("/") {
		op := opMul
		if p.text == "/" {
			op = opDiv
		}
		p.next()
		r, err := p.unary(nest)
		if err != nil {
			return nil, err
		}
		n = &node{op: op, a: n, b: r}
	}
	return n, nil
}

func (p *parser) unary(nest int) (*node, error) {
	if nest > maxNesting {
		return nil, p.errorf("expression nested more than %d deep", maxNesting)
	}
	if p.isOp("-") || p.isOp("+") {
		neg := p.text == "-"
		p.next()
		a, err := p.unary(nest + 1)
		if err != nil {
			return nil, err
		}
		if neg {
			return &node{op: opNeg, a: a}, nil
		}
		return a, nil
	}
	return p.power(nest)
}

func (p *parser) power(nest int) (*node, error) {
	base, err := p.primary(nest)
	if err != nil {
		return nil, err
	}
	if !p.isOp("**") {
		return base, nil
	}
	p.next()
	exp, err := p.unary(nest + 1)
	if err != nil {
		return nil, err
	}
	return &node{op: opPow, a: base, b: exp}, nil
}

func (p *parser) primary(nest int) (*node, error) {
	switch p.tok {
	case tokNum:
		d := ddParse(p.text)
		n := &node{op: opConst, val: p.num, lo: d.lo}
		p.next()
		return n, nil
	case tokName:
		name := p.text
		if op, ok := funcs[name]; ok {
			p.next()
			if !p.isOp("(") {
				return nil, p.errorf("%s needs an argument in parentheses", name)
			}
			p.next()
			a, err := p.expr(nest + 1)
			if err != nil {
				return nil, err
			}
			if !p.isOp(")") {
				return nil, p.errorf("missing ) after the argument of %s", name)
			}
			p.next()
			return &node{op: op, a: a}, nil
		}
		n, ok := p.names[name]
		if !ok {
			return nil, p.errorf("unknown name %q (not a parameter, predictor, constant or function)", name)
		}
		p.next()
		return n, nil
	case tokOp:
		if p.text == "(" {
			p.next()
			a, err := p.expr(nest + 1)
			if err != nil {
				return nil, err
			}
			if !p.isOp(")") {
				return nil, p.errorf("missing )")
			}
			p.next()
			return a, nil
		}
	}
	return nil, p.errorf("unexpected %s", p.describe())
}
