//! A small WebAssembly binary encoder: just what a model's kernels need.
//!
//! It writes the module header and the type, import, function, export and
//! code sections of the WebAssembly 1.0 binary format (W3C WebAssembly Core
//! Specification, chapter 5 "Binary Format"), with `f64` arithmetic, locals,
//! `f64.load`/`f64.store` with offsets, calls, `select`, blocks and loops.
//!
//! A [`Module`] is built by declaring imports first, then functions, then
//! exports; [`Module::finish`] returns the bytes. Function indices count the
//! imported functions first, as the format does.

/// A value type.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum ValType {
    /// 32-bit integer (pointers, counters).
    I32,
    /// 64-bit float.
    F64,
}

impl ValType {
    fn byte(self) -> u8 {
        match self {
            ValType::I32 => 0x7F,
            ValType::F64 => 0x7C,
        }
    }
}

/// A function signature.
#[derive(Clone, Debug, PartialEq, Eq, Hash)]
pub struct FuncType {
    /// Parameter types, in order.
    pub params: Vec<ValType>,
    /// Result types (at most one here).
    pub results: Vec<ValType>,
}

/// Append `v` as unsigned LEB128.
pub fn uleb(out: &mut Vec<u8>, mut v: u64) {
    loop {
        let byte = (v & 0x7F) as u8;
        v >>= 7;
        if v == 0 {
            out.push(byte);
            return;
        }
        out.push(byte | 0x80);
    }
}

/// Append `v` as signed LEB128.
pub fn sleb(out: &mut Vec<u8>, mut v: i64) {
    loop {
        let byte = (v & 0x7F) as u8;
        v >>= 7;
        let done = (v == 0 && byte & 0x40 == 0) || (v == -1 && byte & 0x40 != 0);
        if done {
            out.push(byte);
            return;
        }
        out.push(byte | 0x80);
    }
}

fn name(out: &mut Vec<u8>, s: &str) {
    uleb(out, s.len() as u64);
    out.extend_from_slice(s.as_bytes());
}

/// One-byte instructions with no immediate, by their opcode.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[repr(u8)]
pub enum Simple {
    /// `return`
    Return = 0x0F,
    /// `drop`
    Drop = 0x1A,
    /// `select` (untyped; both operands of one numeric type)
    Select = 0x1B,
    /// `i32.eqz`
    I32Eqz = 0x45,
    /// `i32.lt_s`
    I32LtS = 0x48,
    /// `i32.add`
    I32Add = 0x6A,
    /// `i32.sub`
    I32Sub = 0x6B,
    /// `f64.eq`
    F64Eq = 0x61,
    /// `f64.ne`
    F64Ne = 0x62,
    /// `f64.lt`
    F64Lt = 0x63,
    /// `f64.gt`
    F64Gt = 0x64,
    /// `f64.le`
    F64Le = 0x65,
    /// `f64.ge`
    F64Ge = 0x66,
    /// `f64.abs`
    F64Abs = 0x99,
    /// `f64.neg`
    F64Neg = 0x9A,
    /// `f64.ceil`
    F64Ceil = 0x9B,
    /// `f64.floor`
    F64Floor = 0x9C,
    /// `f64.trunc`
    F64Trunc = 0x9D,
    /// `f64.nearest` (ties to even)
    F64Nearest = 0x9E,
    /// `f64.sqrt`
    F64Sqrt = 0x9F,
    /// `f64.add`
    F64Add = 0xA0,
    /// `f64.sub`
    F64Sub = 0xA1,
    /// `f64.mul`
    F64Mul = 0xA2,
    /// `f64.div`
    F64Div = 0xA3,
    /// `f64.min` (NaN-propagating)
    F64Min = 0xA4,
    /// `f64.max` (NaN-propagating)
    F64Max = 0xA5,
    /// `f64.copysign`
    F64Copysign = 0xA6,
}

/// The body of one function: its extra locals and its instructions.
///
/// Locals are numbered after the parameters, in the order of
/// [`Code::local`] calls.
#[derive(Clone, Debug)]
pub struct Code {
    n_params: u32,
    locals: Vec<ValType>,
    bytes: Vec<u8>,
}

impl Code {
    /// An empty body for a function with `n_params` parameters.
    pub fn new(n_params: u32) -> Self {
        Code { n_params, locals: Vec::new(), bytes: Vec::new() }
    }

    /// Declare a new local of type `t`; returns its index.
    pub fn local(&mut self, t: ValType) -> u32 {
        self.locals.push(t);
        self.n_params + self.locals.len() as u32 - 1
    }

    /// A one-byte instruction.
    pub fn op(&mut self, s: Simple) -> &mut Self {
        self.bytes.push(s as u8);
        self
    }

    /// `local.get i`
    pub fn get(&mut self, i: u32) -> &mut Self {
        self.bytes.push(0x20);
        uleb(&mut self.bytes, i as u64);
        self
    }

    /// `local.set i`
    pub fn set(&mut self, i: u32) -> &mut Self {
        self.bytes.push(0x21);
        uleb(&mut self.bytes, i as u64);
        self
    }

    /// `local.tee i`
    pub fn tee(&mut self, i: u32) -> &mut Self {
        self.bytes.push(0x22);
        uleb(&mut self.bytes, i as u64);
        self
    }

    /// `f64.const v`, bit for bit.
    pub fn f64_const(&mut self, v: f64) -> &mut Self {
        self.bytes.push(0x44);
        self.bytes.extend_from_slice(&v.to_bits().to_le_bytes());
        self
    }

    /// `i32.const v`
    pub fn i32_const(&mut self, v: i32) -> &mut Self {
        self.bytes.push(0x41);
        sleb(&mut self.bytes, v as i64);
        self
    }

    /// `f64.load offset=offset` (8-byte aligned) from the address on the stack.
    pub fn f64_load(&mut self, offset: u32) -> &mut Self {
        self.bytes.push(0x2B);
        self.memarg(offset)
    }

    /// `f64.store offset=offset` (8-byte aligned): address, then value.
    pub fn f64_store(&mut self, offset: u32) -> &mut Self {
        self.bytes.push(0x39);
        self.memarg(offset)
    }

    fn memarg(&mut self, offset: u32) -> &mut Self {
        uleb(&mut self.bytes, 3);
        uleb(&mut self.bytes, offset as u64);
        self
    }

    /// `call f` (function index, imports first).
    pub fn call(&mut self, f: u32) -> &mut Self {
        self.bytes.push(0x10);
        uleb(&mut self.bytes, f as u64);
        self
    }

    /// `block` with no result.
    pub fn block(&mut self) -> &mut Self {
        self.bytes.extend_from_slice(&[0x02, 0x40]);
        self
    }

    /// `loop` with no result.
    pub fn loop_(&mut self) -> &mut Self {
        self.bytes.extend_from_slice(&[0x03, 0x40]);
        self
    }

    /// `br depth`
    pub fn br(&mut self, depth: u32) -> &mut Self {
        self.bytes.push(0x0C);
        uleb(&mut self.bytes, depth as u64);
        self
    }

    /// `br_if depth`
    pub fn br_if(&mut self, depth: u32) -> &mut Self {
        self.bytes.push(0x0D);
        uleb(&mut self.bytes, depth as u64);
        self
    }

    /// `end` of a block, a loop or the function.
    pub fn end(&mut self) -> &mut Self {
        self.bytes.push(0x0B);
        self
    }

    /// The encoded body (locals and instructions, with its size prefix).
    /// The caller must have closed the function with [`end`](Self::end).
    fn encode(&self, out: &mut Vec<u8>) {
        let mut body = Vec::with_capacity(self.bytes.len() + 8);
        // Runs of equal local types, as the format groups them.
        let mut groups: Vec<(u32, ValType)> = Vec::new();
        for &t in &self.locals {
            match groups.last_mut() {
                Some((n, g)) if *g == t => *n += 1,
                _ => groups.push((1, t)),
            }
        }
        uleb(&mut body, groups.len() as u64);
        for (n, t) in groups {
            uleb(&mut body, n as u64);
            body.push(t.byte());
        }
        body.extend_from_slice(&self.bytes);
        uleb(out, body.len() as u64);
        out.extend_from_slice(&body);
    }
}

/// A module under construction. It may import one memory (`env.memory`) and
/// functions, and defines functions and exports them by name.
#[derive(Clone, Debug, Default)]
pub struct Module {
    types: Vec<FuncType>,
    memory: Option<(String, String)>,
    imports: Vec<(String, String, u32)>,
    funcs: Vec<(u32, Code)>,
    exports: Vec<(String, u32)>,
}

impl Module {
    /// An empty module.
    pub fn new() -> Self {
        Module::default()
    }

    /// The index of signature `t`, added if new.
    pub fn type_index(&mut self, t: &FuncType) -> u32 {
        if let Some(i) = self.types.iter().position(|x| x == t) {
            return i as u32;
        }
        self.types.push(t.clone());
        self.types.len() as u32 - 1
    }

    /// Import the memory `module.field`, with a minimum of 0 pages and no
    /// maximum, so that it matches any memory, also after it has grown.
    pub fn import_memory(&mut self, module: &str, field: &str) {
        self.memory = Some((module.to_string(), field.to_string()));
    }

    /// Import the function `module.field` of signature `t`; returns its
    /// function index. All imports must come before any [`define`](Self::define).
    pub fn import_func(&mut self, module: &str, field: &str, t: &FuncType) -> u32 {
        debug_assert!(self.funcs.is_empty(), "imports come first");
        let ty = self.type_index(t);
        self.imports.push((module.to_string(), field.to_string(), ty));
        self.imports.len() as u32 - 1
    }

    /// Define a function of signature `t` with body `code`; returns its
    /// function index.
    pub fn define(&mut self, t: &FuncType, code: Code) -> u32 {
        let ty = self.type_index(t);
        self.funcs.push((ty, code));
        (self.imports.len() + self.funcs.len()) as u32 - 1
    }

    /// Export function `f` as `field`.
    pub fn export(&mut self, field: &str, f: u32) {
        self.exports.push((field.to_string(), f));
    }

    /// The module's bytes.
    pub fn finish(&self) -> Vec<u8> {
        let mut out = vec![0x00, 0x61, 0x73, 0x6D, 0x01, 0x00, 0x00, 0x00];
        let mut s = Vec::new();
        // 1: types.
        uleb(&mut s, self.types.len() as u64);
        for t in &self.types {
            s.push(0x60);
            uleb(&mut s, t.params.len() as u64);
            s.extend(t.params.iter().map(|v| v.byte()));
            uleb(&mut s, t.results.len() as u64);
            s.extend(t.results.iter().map(|v| v.byte()));
        }
        section(&mut out, 1, &mut s);
        // 2: imports, memory first.
        let n_imports = self.imports.len() + usize::from(self.memory.is_some());
        if n_imports > 0 {
            uleb(&mut s, n_imports as u64);
            if let Some((m, f)) = &self.memory {
                name(&mut s, m);
                name(&mut s, f);
                s.extend_from_slice(&[0x02, 0x00, 0x00]); // memory, limits: min 0, no max
            }
            for (m, f, ty) in &self.imports {
                name(&mut s, m);
                name(&mut s, f);
                s.push(0x00);
                uleb(&mut s, *ty as u64);
            }
            section(&mut out, 2, &mut s);
        }
        // 3: function signatures.
        uleb(&mut s, self.funcs.len() as u64);
        for (ty, _) in &self.funcs {
            uleb(&mut s, *ty as u64);
        }
        section(&mut out, 3, &mut s);
        // 7: exports.
        uleb(&mut s, self.exports.len() as u64);
        for (f, idx) in &self.exports {
            name(&mut s, f);
            s.push(0x00);
            uleb(&mut s, *idx as u64);
        }
        section(&mut out, 7, &mut s);
        // 10: code.
        uleb(&mut s, self.funcs.len() as u64);
        for (_, code) in &self.funcs {
            code.encode(&mut s);
        }
        section(&mut out, 10, &mut s);
        out
    }
}

/// Append section `id` with contents `s`, and clear `s`.
fn section(out: &mut Vec<u8>, id: u8, s: &mut Vec<u8>) {
    out.push(id);
    uleb(out, s.len() as u64);
    out.append(s);
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn leb128_matches_the_specification_examples() {
        // Unsigned and signed LEB128 examples of the DWARF 4 standard, §7.6 (figures 22 and 23).
        let cases_u: [(u64, &[u8]); 6] =
            [(2, &[2]), (127, &[127]), (128, &[0x80, 1]), (129, &[0x81, 1]), (130, &[0x82, 1]), (12857, &[0xB9, 100])];
        for (v, want) in cases_u {
            let mut b = Vec::new();
            uleb(&mut b, v);
            assert_eq!(b, want, "uleb {v}");
        }
        let cases_s: [(i64, &[u8]); 8] = [
            (2, &[2]),
            (-2, &[0x7E]),
            (127, &[0xFF, 0]),
            (-127, &[0x81, 0x7F]),
            (128, &[0x80, 1]),
            (-128, &[0x80, 0x7F]),
            (129, &[0x81, 1]),
            (-129, &[0xFF, 0x7E]),
        ];
        for (v, want) in cases_s {
            let mut b = Vec::new();
            sleb(&mut b, v);
            assert_eq!(b, want, "sleb {v}");
        }
    }
}
