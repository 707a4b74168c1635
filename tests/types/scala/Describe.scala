// Prints the Spark SQL DDL that Scala's own view of a case class implies
// (scala-reflect reads the compiled class's Scala signature), so a test can
// compare it with the DDL Plumbline generated for the same shape. Element
// nullability (Seq[Option[T]]) is not part of a DDL string and is dropped;
// DECIMAL is printed without precision, which a case class does not carry.
import scala.reflect.runtime.universe._

object Describe {
  private def quote(name: String): String =
    if (name.matches("[A-Za-z_][A-Za-z0-9_]*")) name else "`" + name.replace("`", "``") + "`"

  private def fields(t: Type): List[(String, Type)] = {
    val constructor = t.decls.collectFirst { case m: MethodSymbol if m.isPrimaryConstructor => m }.get
    constructor.paramLists.head.map(p => (p.name.decodedName.toString, p.typeSignature))
  }

  private def unwrap(t: Type): (Type, Boolean) =
    if (t <:< typeOf[Option[Any]]) (t.typeArgs.head, true) else (t, false)

  private def ddl(t0: Type): String = {
    val t = unwrap(t0)._1
    if (t =:= typeOf[String]) "STRING"
    else if (t =:= typeOf[Boolean]) "BOOLEAN"
    else if (t =:= typeOf[Byte]) "TINYINT"
    else if (t =:= typeOf[Short]) "SMALLINT"
    else if (t =:= typeOf[Int]) "INT"
    else if (t =:= typeOf[Long]) "BIGINT"
    else if (t =:= typeOf[Float]) "FLOAT"
    else if (t =:= typeOf[Double]) "DOUBLE"
    else if (t =:= typeOf[BigDecimal]) "DECIMAL"
    else if (t =:= typeOf[Array[Byte]]) "BINARY"
    // By name: Scala 2.11's runtime mirror cannot load java.sql classes on newer JVMs.
    else if (Set("java.sql.Date", "java.time.LocalDate")(t.typeSymbol.fullName)) "DATE"
    else if (Set("java.sql.Timestamp", "java.time.Instant")(t.typeSymbol.fullName)) "TIMESTAMP"
    else if (t.typeSymbol.fullName == "java.time.LocalDateTime") "TIMESTAMP_NTZ"
    else if (t.typeSymbol == typeOf[Map[Any, Any]].typeSymbol) "MAP<" + ddl(t.typeArgs(0)) + ", " + ddl(t.typeArgs(1)) + ">"
    else if (t <:< typeOf[Seq[Any]]) "ARRAY<" + ddl(t.typeArgs.head) + ">"
    else if (t.typeSymbol.isClass && t.typeSymbol.asClass.isCaseClass)
      "STRUCT<" + fields(t).map { case (n, f) => quote(n) + ": " + ddl(f) + notNull(f) }.mkString(", ") + ">"
    else sys.error("no DDL for " + t)
  }

  private def notNull(t: Type): String = if (unwrap(t)._2) "" else " NOT NULL"

  def columns(t: Type): String = fields(t).map { case (n, f) => quote(n) + " " + ddl(f) + notNull(f) }.mkString(",\n")
}
