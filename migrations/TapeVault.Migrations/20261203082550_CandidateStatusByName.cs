using Microsoft.EntityFrameworkCore.Migrations;

#nullable disable

namespace TapeVault.Migrations.Migrations
{
    /// <inheritdoc />
    public partial class CandidateStatusByName : Migration
    {
        /// <inheritdoc />
        protected override void Up(MigrationBuilder migrationBuilder)
        {
            // Readings were stored by their lower-case word; they are now stored by the enum's name, as object kinds
            // and job states are. Rows of both forms read back the same once this has run.
            migrationBuilder.Sql("""UPDATE "Candidates" SET "Status" = 'Clean' WHERE "Status" = 'clean';""");
            migrationBuilder.Sql("""UPDATE "Candidates" SET "Status" = 'Failed' WHERE "Status" = 'failed';""");
            migrationBuilder.Sql("""UPDATE "Candidates" SET "Status" = 'Unchecked' WHERE "Status" = 'unchecked';""");
        }

        /// <inheritdoc />
        protected override void Down(MigrationBuilder migrationBuilder)
        {
            migrationBuilder.Sql("""UPDATE "Candidates" SET "Status" = 'clean' WHERE "Status" = 'Clean';""");
            migrationBuilder.Sql("""UPDATE "Candidates" SET "Status" = 'failed' WHERE "Status" = 'Failed';""");
            migrationBuilder.Sql("""UPDATE "Candidates" SET "Status" = 'unchecked' WHERE "Status" = 'Unchecked';""");
        }
    }
}
