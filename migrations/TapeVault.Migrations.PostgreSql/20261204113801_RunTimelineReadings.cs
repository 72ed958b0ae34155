using Microsoft.EntityFrameworkCore.Migrations;

#nullable disable

namespace TapeVault.Migrations.PostgreSql.Migrations
{
    /// <inheritdoc />
    public partial class RunTimelineReadings : Migration
    {
        /// <inheritdoc />
        protected override void Up(MigrationBuilder migrationBuilder)
        {
            migrationBuilder.CreateTable(
                name: "RunTimelines",
                columns: table => new
                {
                    RunId = table.Column<int>(type: "integer", nullable: false),
                    Readings = table.Column<byte[]>(type: "bytea", nullable: false)
                },
                constraints: table =>
                {
                    table.PrimaryKey("PK_RunTimelines", x => x.RunId);
                    table.ForeignKey(
                        name: "FK_RunTimelines_Runs_RunId",
                        column: x => x.RunId,
                        principalTable: "Runs",
                        principalColumn: "Id",
                        onDelete: ReferentialAction.Cascade);
                });
        }

        /// <inheritdoc />
        protected override void Down(MigrationBuilder migrationBuilder)
        {
            migrationBuilder.DropTable(
                name: "RunTimelines");
        }
    }
}
