// Readable names of Arrow types for column lists: one visitor, one method per data type.

import { DateUnit, IntervalUnit, Precision, TimeUnit, UnionMode, Visitor } from 'apache-arrow';
import type {
  Binary,
  BinaryView,
  DataType,
  Date_,
  Decimal,
  Dictionary,
  Duration,
  Field,
  FixedSizeBinary,
  FixedSizeList,
  Float,
  Int,
  Interval,
  LargeBinary,
  LargeList,
  LargeUtf8,
  List,
  Map_,
  Null,
  Bool,
  Schema,
  Struct,
  Time,
  Timestamp,
  Union,
  Utf8,
  Utf8View,
} from 'apache-arrow';

const UNIT_ABBR = ['s', 'ms', 'us', 'ns'];
const unit = (u: TimeUnit) => UNIT_ABBR[u];

/** `int64`, `timestamp[us, UTC]`, `list<struct<role: string, content: string>>`. */
class TypeNameVisitor extends Visitor {
  name(type: DataType): string {
    let visit: (t: DataType) => string;
    try {
      visit = this.getVisitFn(type, true);
    } catch {
      // A type the visitor does not know (a newer one): the library's own spelling.
      return String(type).toLowerCase();
    }
    return visit.call(this, type);
  }
  private members(fields: Field[]): string {
    return fields.map((f) => `${f.name}: ${this.name(f.type)}`).join(', ');
  }
  override visitNull(_t: Null): string {
    return 'null';
  }
  override visitBool(_t: Bool): string {
    return 'bool';
  }
  override visitInt(t: Int): string {
    return `${t.isSigned ? 'int' : 'uint'}${t.bitWidth}`;
  }
  override visitFloat(t: Float): string {
    return t.precision === Precision.HALF ? 'float16' : t.precision === Precision.SINGLE ? 'float32' : 'float64';
  }
  override visitUtf8(_t: Utf8): string {
    return 'string';
  }
  override visitLargeUtf8(_t: LargeUtf8): string {
    return 'large_string';
  }
  override visitUtf8View(_t: Utf8View): string {
    return 'string_view';
  }
  override visitBinary(_t: Binary): string {
    return 'binary';
  }
  override visitLargeBinary(_t: LargeBinary): string {
    return 'large_binary';
  }
  override visitBinaryView(_t: BinaryView): string {
    return 'binary_view';
  }
  override visitFixedSizeBinary(t: FixedSizeBinary): string {
    return `fixed_size_binary[${t.byteWidth}]`;
  }
  override visitDecimal(t: Decimal): string {
    return `decimal${t.bitWidth}(${t.precision}, ${t.scale})`;
  }
  override visitDate(t: Date_): string {
    return t.unit === DateUnit.DAY ? 'date32[day]' : 'date64[ms]';
  }
  override visitTimestamp(t: Timestamp): string {
    return `timestamp[${unit(t.unit)}${t.timezone ? `, ${t.timezone}` : ''}]`;
  }
  override visitTime(t: Time): string {
    return `time${t.bitWidth}[${unit(t.unit)}]`;
  }
  override visitDuration(t: Duration): string {
    return `duration[${unit(t.unit)}]`;
  }
  override visitInterval(t: Interval): string {
    return `interval[${IntervalUnit[t.unit]?.toLowerCase() ?? t.unit}]`;
  }
  override visitList(t: List): string {
    return `list<${this.name(t.children[0].type)}>`;
  }
  override visitLargeList(t: LargeList): string {
    return `large_list<${this.name(t.children[0].type)}>`;
  }
  override visitFixedSizeList(t: FixedSizeList): string {
    return `fixed_size_list<${this.name(t.children[0].type)}>[${t.listSize}]`;
  }
  override visitStruct(t: Struct): string {
    return `struct<${this.members(t.children)}>`;
  }
  override visitMap(t: Map_): string {
    const [k, v] = t.children[0].type.children;
    return `map<${this.name(k.type)}, ${this.name(v.type)}>`;
  }
  override visitDictionary(t: Dictionary): string {
    return `dictionary<${this.name(t.dictionary)}, ${this.name(t.indices)}>`;
  }
  override visitUnion(t: Union): string {
    return `${t.mode === UnionMode.Dense ? 'dense_union' : 'sparse_union'}<${this.members(t.children)}>`;
  }
}

const namer = new TypeNameVisitor();

/** A readable type name: `int64`, `timestamp[us, UTC]`, `list<struct<role: string, content: string>>`. */
export function typeName(type: DataType): string {
  return namer.name(type);
}

export function schemaColumns(schema: Schema): { name: string; type: string }[] {
  return schema.fields.map((f) => ({ name: f.name, type: typeName(f.type) }));
}
